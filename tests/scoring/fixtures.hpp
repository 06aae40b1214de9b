// Small hand-built records for scoring tests: regular beats with S1 and S2 at known times,
// their per-sample states, and a signal of windowed tone bursts with optional white noise.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "core/record.hpp"

namespace stethogen::test {

struct FixtureSpec {
  std::string record_id = "r000000";
  State state = State::rest;
  std::string population = "resting";
  double severity = 0, exercise_intensity = 0;
  double heart_rate_bpm = 72;
  std::optional<double> snr_db;  // nullopt: clean
  double duration_s = 10;
  int sample_rate_hz = 2000;
  std::vector<Site> sites = {Site::aortic, Site::mitral};
  std::uint64_t seed = 1;
};

// Beats every 60/HR s from 0.3 s; S1 lasts 120 ms, S2 90 ms, S2 onset 0.30 s after S1 onset.
// Heart-level events plus one row per site, delayed 2 ms per site index.
Record fixture_record(const FixtureSpec& spec);

// The record's own labels at one site as segmentation rows, every boundary moved by shift_s.
std::string states_as_csv(const Record& r, std::size_t site, double shift_s, bool header = true);

}  // namespace stethogen::test
