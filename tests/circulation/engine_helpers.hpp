// Shared helpers of the circulation tests: subjects and per-beat averages.
#pragma once

#include <cmath>
#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "core/subject.hpp"
#include "generator/circulation/simulate.hpp"

namespace stethogen::gen::test {

inline SubjectSpec subject(State state, double level = 0.0, double duration_s = 6.0,
                           std::optional<double> heart_rate_bpm = std::nullopt) {
  SubjectSpec s;
  s.record_id = "t0001";
  s.dataset_seed = 11;
  s.record_index = 3;
  s.state = state;
  if (state == State::exercise) s.exercise_intensity = level;
  else s.severity = level;
  s.params.duration_s = duration_s;
  s.params.heart_rate_bpm = heart_rate_bpm;
  return s;
}

// No breathing and no HRV: isolates the heart-rate and state effects.
inline SubjectSpec still(SubjectSpec s) {
  s.params.respiration_depth_mmhg = 0.0;
  s.params.rsa_fraction = 0.0;
  s.params.lf_fraction = 0.0;
  return s;
}

// Mean of a per-beat quantity over the beats inside the record, skipping NaN.
inline double beat_mean(const CirculationResult& r, const std::function<double(const BeatHemodynamics&)>& f,
                        const std::function<bool(const BeatHemodynamics&)>& keep = nullptr) {
  double sum = 0;
  int n = 0;
  for (const auto& b : r.beats) {
    if (b.lv_activation_s < 0 || b.lv_activation_s >= r.duration_s) continue;
    if (keep && !keep(b)) continue;
    const double v = f(b);
    if (std::isnan(v)) continue;
    sum += v;
    ++n;
  }
  return n ? sum / n : NAN;
}

inline double split_ms(const BeatHemodynamics& b) { return (b.pulmonic_close_s - b.aortic_close_s) * 1e3; }

}  // namespace stethogen::gen::test
