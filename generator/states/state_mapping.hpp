// Maps a subject (state, exercise intensity or failure severity, drawn parameters) onto the
// engine's parameters. Every mapping is documented with units and sources in docs/physiology.md.
#pragma once

#include "core/subject.hpp"
#include "generator/circulation/parameters.hpp"
#include "generator/rhythm/beat_schedule.hpp"

namespace stethogen::gen {

struct EngineSetup {
  CirculationParams circulation;
  RhythmParams rhythm;
};

// Resting heart rate of a healthy supine adult when the subject gives none (bpm).
inline constexpr double kDefaultRestingHeartRateBpm = 70.0;
// Highest rate a state may drive the heart to (bpm); a subject's own higher resting rate stays.
inline constexpr double kMaxStateHeartRateBpm = 200.0;

// Throws InputError for values outside the allowed box (intensity and severity in [0, 1], ...).
EngineSetup map_subject_to_engine(const SubjectSpec& subject);

}  // namespace stethogen::gen
