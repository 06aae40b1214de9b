// Chamber activation e(t) in [0, 1], one pulse per beat, with onsets from the beat's electrical
// events and durations from the preceding RR (see ActivationTiming for the published shapes).
#pragma once

#include <array>
#include <vector>

#include "generator/circulation/parameters.hpp"

namespace stethogen::gen {

// Ventricular pulses are double-Hill (Stergiopulos et al. 1996), cut to zero after
// kHillCutoff * tau2 where they are below 1e-8; atrial pulses are raised cosines.
struct ActivationPulse {
  double onset_s = 0;
  double a_s = 0;      // Hill: tau1; cosine: rise time to peak
  double b_s = 0;      // Hill: tau2; cosine: fall time from peak to rest
  double norm = 1.0;   // Hill: scale so that the peak is 1
  double m1 = 0, m2 = 0;  // Hill exponents; m1 = 0 marks a raised cosine
};

inline constexpr double kHillCutoff = 2.0;

enum Chamber : int { kLa = 0, kLv = 1, kRa = 2, kRv = 3 };

// Pulses of the four chambers, one per beat, increasing onsets.
struct ActivationPlan {
  std::array<std::vector<ActivationPulse>, 4> pulses;  // indexed by Chamber

  // Activation of one chamber at t: the larger of the latest pulse and the one before it, so a
  // pulse still relaxing when the next begins (very short RR) stays continuous.
  double activation(int chamber, double t_s) const;
  // The same value, with the pulse index of the previous call as a starting point: the
  // integrator asks for nearly increasing times, so the search is mostly one comparison.
  double activation(int chamber, double t_s, std::size_t& hint) const;
};

double pulse_shape(const ActivationPulse& p, double t_s);
// A double-Hill pulse normalised to a peak of 1.
ActivationPulse hill_pulse(double onset_s, double tau1_s, double tau2_s, double m1, double m2);

// Stretches a ventricular pulse in time by factor (its peak stays 1).
inline void stretch_pulse(ActivationPulse& p, double factor) {
  p.a_s *= factor;
  p.b_s *= factor;
}

// lv_activation_s: Q-wave equivalents. The first beat's durations use the interval to the second.
ActivationPlan make_activation_plan(const std::vector<double>& lv_activation_s, const ActivationTiming& timing,
                                    double pr_interval_s, double lv_rv_delay_s);

}  // namespace stethogen::gen
