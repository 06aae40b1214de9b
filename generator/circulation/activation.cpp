#include "generator/circulation/activation.hpp"

#include <algorithm>
#include <cmath>

namespace stethogen::gen {

namespace {

inline double hill_raw(double u, double tau1, double tau2, double m1, double m2) {
  const double g1 = std::pow(u / tau1, m1);
  const double g2 = std::pow(u / tau2, m2);
  return g1 / (1.0 + g1) / (1.0 + g2);
}

}  // namespace

double pulse_shape(const ActivationPulse& p, double t_s) {
  const double u = t_s - p.onset_s;
  if (u <= 0.0) return 0.0;
  if (p.m1 > 0.0) {
    if (u >= kHillCutoff * p.b_s) return 0.0;
    return p.norm * hill_raw(u, p.a_s, p.b_s, p.m1, p.m2);
  }
  if (u < p.a_s) return 0.5 * (1.0 - std::cos(M_PI * u / p.a_s));
  const double w = u - p.a_s;
  if (w < p.b_s) return 0.5 * (1.0 + std::cos(M_PI * w / p.b_s));
  return 0.0;
}

ActivationPulse hill_pulse(double onset_s, double tau1_s, double tau2_s, double m1, double m2) {
  // The peak depends only on tau1/tau2 and the exponents (time scales out), so it is found once
  // on the unit time scale tau2 = 1 and reused while those stay the same.
  thread_local double cached_ratio = -1, cached_m1 = -1, cached_m2 = -1, cached_peak = 1;
  const double ratio = tau1_s / tau2_s;
  if (ratio != cached_ratio || m1 != cached_m1 || m2 != cached_m2) {
    // The peak lies between tau1 and tau2 for the exponents in use; golden-section search.
    double a = 0.2 * ratio, b = 1.2;
    const double g = 0.5 * (std::sqrt(5.0) - 1.0);
    for (int i = 0; i < 80; ++i) {
      const double c = b - g * (b - a), d = a + g * (b - a);
      if (hill_raw(c, ratio, 1.0, m1, m2) > hill_raw(d, ratio, 1.0, m1, m2)) b = d; else a = c;
    }
    cached_ratio = ratio;
    cached_m1 = m1;
    cached_m2 = m2;
    cached_peak = hill_raw(0.5 * (a + b), ratio, 1.0, m1, m2);
  }
  return {onset_s, tau1_s, tau2_s, 1.0 / cached_peak, m1, m2};
}

double ActivationPlan::activation(int chamber, double t_s) const {
  std::size_t hint = 0;
  return activation(chamber, t_s, hint);
}

double ActivationPlan::activation(int chamber, double t_s, std::size_t& hint) const {
  const auto& list = pulses[chamber];
  const std::size_t n = list.size();
  // k: the last pulse with onset <= t (as upper_bound - 1 would find it).
  const auto last_started = [&](std::size_t k) { return list[k].onset_s <= t_s && (k + 1 == n || t_s < list[k + 1].onset_s); };
  std::size_t k = hint;
  if (!(k < n && last_started(k))) {
    if (k + 1 < n && last_started(k + 1)) {
      ++k;
    } else {
      auto it = std::upper_bound(list.begin(), list.end(), t_s,
                                 [](double t, const ActivationPulse& p) { return t < p.onset_s; });
      if (it == list.begin()) return 0.0;
      k = static_cast<std::size_t>(it - list.begin()) - 1;
    }
  }
  hint = k;
  double e = pulse_shape(list[k], t_s);
  if (k > 0) e = std::max(e, pulse_shape(list[k - 1], t_s));
  return e;
}

ActivationPlan make_activation_plan(const std::vector<double>& q_s, const ActivationTiming& tm,
                                    double pr_interval_s, double lv_rv_delay_s) {
  ActivationPlan plan;
  for (auto& v : plan.pulses) v.reserve(q_s.size());
  for (std::size_t n = 0; n < q_s.size(); ++n) {
    // Durations follow the preceding RR (the first beat borrows the following one).
    double rr = 1.0;
    if (n > 0) rr = q_s[n] - q_s[n - 1];
    else if (q_s.size() > 1) rr = q_s[1] - q_s[0];
    const double period = tm.ventricular_period_base_s + tm.ventricular_period_slope * rr;
    const double lv_onset = q_s[n] + tm.lv_electromechanical_delay_s;
    const double rv_onset = lv_onset + tm.rv_extra_delay_s + lv_rv_delay_s;
    const double atrial_onset = q_s[n] - pr_interval_s + tm.atrial_electromechanical_delay_s;
    const double lv_t = period * tm.lv_duration_scale, rv_t = period * tm.rv_duration_scale;
    plan.pulses[kLv].push_back(
        hill_pulse(lv_onset, tm.hill_tau1_fraction * lv_t, tm.hill_tau2_fraction * lv_t, tm.hill_m1, tm.hill_m2));
    plan.pulses[kRv].push_back(
        hill_pulse(rv_onset, tm.hill_tau1_fraction * rv_t, tm.hill_tau2_fraction * rv_t, tm.hill_m1, tm.hill_m2));
    plan.pulses[kLa].push_back({atrial_onset, tm.atrial_rise_s, tm.atrial_fall_s, 1.0, 0.0, 0.0});
    plan.pulses[kRa].push_back({atrial_onset, tm.atrial_rise_s, tm.atrial_fall_s, 1.0, 0.0, 0.0});
  }
  return plan;
}

}  // namespace stethogen::gen
