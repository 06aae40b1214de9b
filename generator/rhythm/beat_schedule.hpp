// Beat times from a heart rate with heart-rate variability: respiratory sinus arrhythmia coupled
// to the respiration phase plus a low-frequency oscillation inside the 0.04-0.15 Hz LF band
// (Task Force of the ESC and NASPE 1996, Circulation 93:1043), and the breaths themselves.
#pragma once

#include <cstdint>
#include <vector>

#include "generator/rhythm/respiration.hpp"

namespace stethogen::gen {

struct RhythmParams {
  double heart_rate_bpm = 70.0;
  double rsa_fraction = 0.03;      // peak RR modulation by respiration (RR shortest at end-inspiration)
  double lf_fraction = 0.02;       // peak RR modulation of the LF oscillation
  double respiration_rate_per_min = 15.0;
  double respiration_depth_mmhg = 3.0;  // peak-to-peak pleural swing
  double inspiration_fraction = 0.4;
  double breath_period_cv = 0.10;  // breath-to-breath SD / mean of the breath period
  double pr_interval_s = 0.160;
  double lv_rv_delay_s = 0.0;
};

// Throws InputError naming the first parameter out of range.
void check_rhythm_params(const RhythmParams& p);

struct RhythmPlan {
  Respiration respiration;
  std::vector<double> lv_activation_s;  // Q-wave equivalents, increasing
  double nominal_rr_s = 0;
};

// Beats from beats_begin_s and breaths from breathing_begin_s, both covering end_s. The first
// lead_in_beats intervals are exactly the nominal RR (they continue a run-in at constant rate);
// the random parts (LF frequency and phase, breath periods) come from the rhythm stream of
// (seed, record index).
RhythmPlan make_rhythm(const RhythmParams& p, double end_expiratory_mmhg, std::uint64_t seed,
                       std::uint64_t record_index, double beats_begin_s, double breathing_begin_s, double end_s,
                       int lead_in_beats);

}  // namespace stethogen::gen
