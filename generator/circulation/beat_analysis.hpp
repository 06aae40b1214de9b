// Per-beat physiology from the dense series and the located valve transitions.
#pragma once

#include <vector>

#include "generator/circulation/activation.hpp"
#include "generator/hemodynamics.hpp"
#include "generator/rhythm/respiration.hpp"

namespace stethogen::gen {

struct BeatTiming {
  double pr_interval_s = 0.16;
  double lv_rv_delay_s = 0.0;
};

// Linear interpolation of a series channel at t (clamped to the series span).
double series_value_at(const HemodynamicSeries& s, const std::vector<double>& channel, double t_s);

// One BeatHemodynamics for every beat whose [Q_n, Q_n+1) lies inside the series; assigns each
// transition its beat number (beat 0 = first such beat; earlier transitions get -1).
std::vector<BeatHemodynamics> analyse_beats(const HemodynamicSeries& series, const std::vector<double>& q_s,
                                            const ActivationPlan& activation, const Respiration& respiration,
                                            const BeatTiming& timing, std::vector<ValveTransition>& transitions);

}  // namespace stethogen::gen
