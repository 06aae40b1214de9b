#include "generator/circulation/activation.hpp"

#include <algorithm>
#include <cmath>

#include "core/portable_math.hpp"

#include "generator/circulation/fast_cosine.hpp"

namespace stethogen::gen {

namespace {

// x^n for n >= 1 by repeated squaring.
inline double whole_power(double x, int n) {
  double result = 1.0;
  for (; n > 0; n >>= 1, x *= x)
    if (n & 1) result *= x;
  return result;
}

// The double-Hill shape at s = u / tau2 before normalisation. Both powers come from one
// logarithm, (u/tau1)^m1 = exp(m1 ln s + m1 ln(tau2/tau1)) and (u/tau2)^m2 = exp(m2 ln s), or
// s^m2 by squaring for a whole m2: about half the cost of two pow.
inline double hill_unit(double s, double log_ratio_term, double m1, double m2, int m2_whole) {
  const double l = portable::log(s);
  const double g1 = portable::exp(m1 * l + log_ratio_term);
  const double g2 = m2_whole > 0 ? whole_power(s, m2_whole) : portable::exp(m2 * l);
  return g1 / ((1.0 + g1) * (1.0 + g2));
}

inline int whole_exponent(double m) { return m == std::round(m) && m >= 1.0 && m <= 64.0 ? static_cast<int>(m) : 0; }

// Inlined into every caller: the hot path evaluates six pulses per call. table: the plan's
// Hill shape (nullptr or empty: the exact formula everywhere).
[[gnu::always_inline]] inline double shape(const ActivationPulse& p, double t_s, const HillTable* table) {
  const double u = t_s - p.onset_s;
  if (u <= 0.0) return 0.0;
  if (p.m1 > 0.0) {
    if (u >= kHillCutoff * p.b_s) return 0.0;
    const double s = u * p.rate_b;
    if (table != nullptr && s >= HillTable::kFirstS) return (*table)(s);
    return p.norm * hill_unit(s, p.hill_log_ratio_term, p.m1, p.m2, p.hill_m2_whole);
  }
  if (u < p.a_s) return 0.5 * (1.0 - fast::cos_half_turn(u * p.rate_a));
  const double w = u - p.a_s;
  if (w < p.b_s) return 0.5 * (1.0 + fast::cos_half_turn(w * p.rate_b));
  return 0.0;
}

// Index of the last pulse with onset <= t (as upper_bound - 1 would find it), starting from hint;
// false before the first onset.
inline bool last_started(const std::vector<ActivationPulse>& list, double t_s, std::size_t& hint) {
  const std::size_t n = list.size();
  const auto is_last = [&](std::size_t k) { return list[k].onset_s <= t_s && (k + 1 == n || t_s < list[k + 1].onset_s); };
  if (hint < n && is_last(hint)) return true;
  if (hint + 1 < n && is_last(hint + 1)) {
    ++hint;
    return true;
  }
  auto it = std::upper_bound(list.begin(), list.end(), t_s, [](double t, const ActivationPulse& p) { return t < p.onset_s; });
  if (it == list.begin()) return false;
  hint = static_cast<std::size_t>(it - list.begin()) - 1;
  return true;
}

[[gnu::always_inline]] inline double chamber_activation(const std::vector<ActivationPulse>& list, double t_s,
                                                        std::size_t& hint, const HillTable* table) {
  if (!last_started(list, t_s, hint)) return 0.0;
  double e = shape(list[hint], t_s, table);
  if (hint > 0) e = std::max(e, shape(list[hint - 1], t_s, table));
  return e;
}

}  // namespace

double pulse_shape(const ActivationPulse& p, double t_s) { return shape(p, t_s, nullptr); }

double hill_peak(double ratio, double m1, double m2) {
  // The peak lies between tau1 and tau2 for the exponents in use; golden-section search.
  const double log_ratio_term = -m1 * portable::log(ratio);
  const int m2_whole = whole_exponent(m2);
  double a = 0.2 * ratio, b = 1.2;
  const double g = 0.5 * (std::sqrt(5.0) - 1.0);
  for (int i = 0; i < 80; ++i) {
    const double c = b - g * (b - a), d = a + g * (b - a);
    if (hill_unit(c, log_ratio_term, m1, m2, m2_whole) > hill_unit(d, log_ratio_term, m1, m2, m2_whole)) b = d; else a = c;
  }
  return hill_unit(0.5 * (a + b), log_ratio_term, m1, m2, m2_whole);
}

ActivationPulse hill_pulse(double onset_s, double tau1_s, double tau2_s, double m1, double m2, double norm) {
  ActivationPulse p{onset_s, tau1_s, tau2_s, norm, m1, m2};
  p.rate_b = 1.0 / tau2_s;
  p.hill_log_ratio_term = m1 * portable::log(tau2_s / tau1_s);
  p.hill_m2_whole = whole_exponent(m2);
  return p;
}

ActivationPulse cosine_pulse(double onset_s, double rise_s, double fall_s) {
  ActivationPulse p{onset_s, rise_s, fall_s, 1.0, 0.0, 0.0};
  p.rate_a = M_PI / rise_s;
  p.rate_b = M_PI / fall_s;
  return p;
}

double ActivationPlan::activation(int chamber, double t_s) const {
  std::size_t hint = 0;
  return chamber_activation(pulses[chamber], t_s, hint, table());
}

void ActivationPlan::activations(double t_s, ActivationCursor& c, std::array<double, 4>& e) const {
  if (t_s != c.t_s) {
    // Stored element by element from registers: copying an array just written element by element
    // would stall on store-to-load forwarding.
    const HillTable* hill = table();
    const double lv = chamber_activation(pulses[kLv], t_s, c.pulse[kLv], hill);
    const double rv = chamber_activation(pulses[kRv], t_s, c.pulse[kRv], hill);
    const double la = chamber_activation(pulses[kLa], t_s, c.pulse[kLa], nullptr);
    const double ra = atria_identical ? la : chamber_activation(pulses[kRa], t_s, c.pulse[kRa], nullptr);
    e[kLv] = c.value[kLv] = lv;
    e[kRv] = c.value[kRv] = rv;
    e[kLa] = c.value[kLa] = la;
    e[kRa] = c.value[kRa] = ra;
    c.t_s = t_s;
    return;
  }
  e = c.value;
}

ActivationPlan make_activation_plan(const std::vector<double>& q_s, const ActivationTiming& tm,
                                    double pr_interval_s, double lv_rv_delay_s) {
  ActivationPlan plan;
  for (auto& v : plan.pulses) v.reserve(q_s.size());
  // The tau ratio and exponents are the same for every ventricular pulse, so is the peak.
  const double norm = 1.0 / hill_peak(tm.hill_tau1_fraction / tm.hill_tau2_fraction, tm.hill_m1, tm.hill_m2);
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
    plan.pulses[kLv].push_back(hill_pulse(lv_onset, tm.hill_tau1_fraction * lv_t, tm.hill_tau2_fraction * lv_t,
                                          tm.hill_m1, tm.hill_m2, norm));
    plan.pulses[kRv].push_back(hill_pulse(rv_onset, tm.hill_tau1_fraction * rv_t, tm.hill_tau2_fraction * rv_t,
                                          tm.hill_m1, tm.hill_m2, norm));
    plan.pulses[kLa].push_back(cosine_pulse(atrial_onset, tm.atrial_rise_s, tm.atrial_fall_s));
  }
  plan.pulses[kRa] = plan.pulses[kLa];
  plan.atria_identical = true;
  if (!q_s.empty()) {
    // The table depends on these four numbers only; a thread's plans mostly share them (run-in
    // and recording, records of one state), so the last table is kept (about 2 M instructions).
    // (The pulses' own ln(tau2 / tau1) terms differ from the fractions' in the last bits only.)
    const std::array<double, 4> key = {tm.hill_m1 * portable::log(tm.hill_tau2_fraction / tm.hill_tau1_fraction), tm.hill_m1,
                                       tm.hill_m2, norm};
    thread_local std::array<double, 4> last_key{};
    thread_local HillTable last_table;
    thread_local bool have_last = false;
    if (!have_last || key != last_key) {
      last_table = HillTable(key[0], key[1], key[2], key[3]);
      last_key = key;
      have_last = true;
    }
    plan.hill_table = last_table;
  }
  return plan;
}

}  // namespace stethogen::gen
