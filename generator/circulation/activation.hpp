// Chamber activation e(t) in [0, 1], one pulse per beat, with onsets from the beat's electrical
// events and durations from the preceding RR (see ActivationTiming for the published shapes).
#pragma once

#include <array>
#include <cmath>
#include <limits>
#include <vector>

#include "generator/circulation/hill_table.hpp"
#include "generator/circulation/parameters.hpp"

namespace stethogen::gen {

// Ventricular pulses are double-Hill (Stergiopulos et al. 1996), cut to zero after
// kHillCutoff * tau2, where the relaxation term 1 / (1 + 2^m2) leaves about 5e-6 of the peak at
// the default m2 = 18 (a small step in the right-hand side); atrial pulses are raised cosines.
struct ActivationPulse {
  double onset_s = 0;
  double a_s = 0;      // Hill: tau1; cosine: rise time to peak
  double b_s = 0;      // Hill: tau2; cosine: fall time from peak to rest
  double norm = 1.0;   // Hill: scale so that the peak is 1
  double m1 = 0, m2 = 0;  // Hill exponents; m1 = 0 marks a raised cosine
  // Derived from the above, so that an evaluation needs no division (hill_pulse, cosine_pulse
  // and stretch_pulse keep them in step): Hill: 1 / tau2 and m1 ln(tau2 / tau1), which a stretch
  // leaves unchanged, and m2 if it is a whole number (then a product of squares); cosine:
  // pi / rise and pi / fall.
  double rate_a = 0, rate_b = 0;
  double hill_log_ratio_term = 0;
  int hill_m2_whole = 0;
};

inline constexpr double kHillCutoff = 2.0;

enum Chamber : int { kLa = 0, kLv = 1, kRa = 2, kRv = 3 };

// One evaluator's position in a plan: the pulse index of its last call per chamber (the search
// start: the integrator asks for nearly increasing times) and that call's time and values
// (Dormand-Prince evaluates twice at the end of each step). A plan may be changed between calls
// only where it does not change the activation at the cursor's last time.
struct ActivationCursor {
  std::array<std::size_t, 4> pulse{};
  double t_s = std::numeric_limits<double>::quiet_NaN();
  std::array<double, 4> value{};
};

// Pulses of the four chambers, one per beat, increasing onsets.
struct ActivationPlan {
  std::array<std::vector<ActivationPulse>, 4> pulses;  // indexed by Chamber
  // The right atrium's pulses are the left's (make_activation_plan): evaluated once for both.
  bool atria_identical = false;
  // The ventricular pulses' shape for s = u / tau2 >= HillTable::kFirstS (make_activation_plan
  // builds it for the exponents and tau ratio of all its Hill pulses); empty: the exact formula.
  HillTable hill_table;

  // Activation of one chamber at t: the larger of the latest pulse and the one before it, so a
  // pulse still relaxing when the next begins (very short RR) stays continuous.
  double activation(int chamber, double t_s) const;
  // All four chambers at t, continuing from the cursor's last call.
  void activations(double t_s, ActivationCursor& cursor, std::array<double, 4>& e) const;
  const HillTable* table() const { return hill_table.empty() ? nullptr : &hill_table; }
};

double pulse_shape(const ActivationPulse& p, double t_s);
// The peak of the double-Hill shape with tau2 = 1 (time scales out), for the normalisation.
double hill_peak(double tau1_over_tau2, double m1, double m2);
// A double-Hill pulse scaled by norm (1 / hill_peak of its tau ratio and exponents for a peak of 1).
ActivationPulse hill_pulse(double onset_s, double tau1_s, double tau2_s, double m1, double m2, double norm);
ActivationPulse cosine_pulse(double onset_s, double rise_s, double fall_s);

// Stretches a ventricular pulse in time by factor (its peak stays 1).
inline void stretch_pulse(ActivationPulse& p, double factor) {
  p.a_s *= factor;
  p.b_s *= factor;
  p.rate_b = 1.0 / p.b_s;
}

// lv_activation_s: Q-wave equivalents. The first beat's durations use the interval to the second.
ActivationPlan make_activation_plan(const std::vector<double>& lv_activation_s, const ActivationTiming& timing,
                                    double pr_interval_s, double lv_rv_delay_s);

}  // namespace stethogen::gen
