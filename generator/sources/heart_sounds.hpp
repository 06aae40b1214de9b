// All sound components of a record, each computed from the hemodynamic state of its beat
// (generator/sources/source_laws.hpp). Opening events are silent.
#pragma once

#include <array>
#include <vector>

#include "core/subject.hpp"
#include "generator/hemodynamics.hpp"
#include "generator/sources/component.hpp"
#include "generator/sources/source_laws.hpp"

namespace stethogen::gen {

// Subject-to-subject variation on top of the physics: multiplicative factors per component.
struct ComponentVariation {
  double gain = 1.0;
  double pitch = 1.0;
  double damping = 1.0;
};
using SourceVariation = std::array<ComponentVariation, kComponentCount>;

// Log-normal factors with SD params.source_variation (loudness) and half that (pitch, damping),
// drawn from RandomStream(seed, record index, Stream::sources) in a fixed order.
SourceVariation draw_source_variation(const SubjectSpec& subject);

// One component from its drive and load (exposed for tests).
SoundComponent make_component(EventKind kind, std::int32_t beat, double start_s, double drive, double load_mmhg,
                              const ComponentVariation& variation);

// Every component of every beat whose event lies inside the series, sorted by start time.
// A component is left out only where its anchoring valve event is missing from the series.
std::vector<SoundComponent> heart_sound_sources(const CirculationResult& circulation,
                                                const SourceVariation& variation);

}  // namespace stethogen::gen
