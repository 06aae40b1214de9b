// The record's ground truth: the event table (components, S1/S2 intervals, valve events; heart
// level and per site), the per-beat physiology and the four-state labels of every site.
// Window rule (docs/sounds.md, "Truth"): a sound goes into the event table when it lies wholly
// inside the record, onset >= 0 and offset < duration; a valve event when its instant does;
// a beat when its LV activation does. Sounds straddling an edge are still labelled.
#pragma once

#include <vector>

#include "core/record.hpp"
#include "generator/hemodynamics.hpp"
#include "generator/sources/component.hpp"
#include "generator/transmission/render.hpp"

namespace stethogen::gen {

struct TruthInputs {
  const CirculationResult& circulation;
  const std::vector<SoundComponent>& components;
  const std::vector<SoundGroup>& groups;
  const Rendering& rendering;
  int sample_rate_hz = 0;
  std::size_t n_samples = 0;
};

struct Truth {
  std::vector<Event> events;
  std::vector<BeatRow> beats;
  SiteArray<std::uint8_t> states;
};

Truth build_truth(const TruthInputs& in);

// Sample index of a time: the nearest sample, round(time * rate).
std::int64_t sample_index(double time_s, int sample_rate_hz);

}  // namespace stethogen::gen
