#include "generator/rhythm/beat_schedule.hpp"

#include <cmath>

#include "core/portable_math.hpp"

#include "core/check.hpp"
#include "core/random.hpp"

namespace stethogen::gen {

void check_rhythm_params(const RhythmParams& p) {
  check_in_range("heart_rate_bpm", p.heart_rate_bpm, 30.0, 220.0);
  check_in_range("rsa_fraction", p.rsa_fraction, 0.0, 0.2);
  check_in_range("lf_fraction", p.lf_fraction, 0.0, 0.2);
  check_in_range("respiration_rate_per_min", p.respiration_rate_per_min, 4.0, 60.0);
  check_in_range("respiration_depth_mmhg", p.respiration_depth_mmhg, 0.0, 20.0);
  check_in_range("inspiration_fraction", p.inspiration_fraction, 0.2, 0.6);
  check_in_range("breath_period_cv", p.breath_period_cv, 0.0, 0.3);
  check_in_range("pr_interval_s", p.pr_interval_s, 0.08, 0.4);
  check_in_range("lv_rv_delay_s", p.lv_rv_delay_s, -0.1, 0.2);
}

RhythmPlan make_rhythm(const RhythmParams& p, double end_expiratory_mmhg, std::uint64_t seed,
                       std::uint64_t record_index, double beats_begin_s, double breathing_begin_s, double end_s,
                       int lead_in_beats) {
  RandomStream rng(seed, record_index, Stream::rhythm);
  // LF oscillation: frequency uniform in 0.06-0.12 Hz, well inside the Task Force LF band.
  const double lf_hz = rng.uniform(0.06, 0.12);
  const double lf_phase = rng.uniform(0.0, 2.0 * M_PI);

  // Breaths from breathing_begin_s on, each period N(T, cv T) truncated to +-2 SD.
  const double breath_s = 60.0 / p.respiration_rate_per_min;
  std::vector<double> starts{breathing_begin_s};
  while (starts.back() <= end_s) {
    const double z = rng.truncated_normal(0.0, 1.0, -2.0, 2.0);
    starts.push_back(starts.back() + breath_s * (1.0 + p.breath_period_cv * z));
  }
  Respiration resp(std::move(starts), breath_s, p.inspiration_fraction, end_expiratory_mmhg,
                   p.respiration_depth_mmhg);

  const double rr0 = 60.0 / p.heart_rate_bpm;
  std::vector<double> beats{beats_begin_s};
  int n = 0;
  while (beats.back() <= end_s) {
    const double t = beats.back();
    double rr = rr0;
    if (n >= lead_in_beats) {
      const double rsa = p.rsa_fraction * (1.0 - 2.0 * resp.swing(resp.phase(t)));
      const double lf = p.lf_fraction * portable::sin(2.0 * M_PI * lf_hz * t + lf_phase);
      rr = rr0 * (1.0 + rsa + lf);
    }
    beats.push_back(t + rr);
    ++n;
  }
  return RhythmPlan{std::move(resp), std::move(beats), rr0};
}

}  // namespace stethogen::gen
