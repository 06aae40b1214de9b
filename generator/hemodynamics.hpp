// The circulation's output as the sound sources and the truth consume it: dense traces at a
// fixed internal rate, exact valve transitions and per-beat physiology. Produced by
// generator/circulation (simulate_circulation), consumed by generator/sources and truth.
#pragma once

#include <cstdint>
#include <limits>
#include <vector>

namespace stethogen::gen {

enum class Valve : std::uint8_t { mitral, tricuspid, aortic, pulmonic };

// A valve opening or closing instant, located on the solver's dense output.
struct ValveTransition {
  Valve valve = Valve::mitral;
  bool opening = false;
  double time_s = 0;  // record time (0 = first recorded sample)
  std::int32_t beat = 0;
};

// Uniformly sampled state. Sample k is at time t0_s + k / rate_hz. The series extends at least one
// full cardiac cycle before 0 and after the record's duration, so sounds and labels at the record
// edges are defined. Pressures mmHg, volumes mL, flows mL/s (positive = forward through the valve),
// leaflet state 0 = closed .. 1 = fully open (Mynard et al. 2012).
struct HemodynamicSeries {
  double rate_hz = 0;
  double t0_s = 0;
  std::vector<double> p_lv, p_rv, p_la, p_ra, p_ao, p_pa, p_thorax;
  std::vector<double> v_lv, v_rv, v_la, v_ra;
  std::vector<double> q_mitral, q_tricuspid, q_aortic, q_pulmonic;
  std::vector<double> leaflet_mitral, leaflet_tricuspid, leaflet_aortic, leaflet_pulmonic;
  std::vector<double> resp_phase;  // [0, 1), 0 = start of inspiration

  std::size_t size() const { return p_lv.size(); }
  double time_at(std::size_t k) const { return t0_s + static_cast<double>(k) / rate_hz; }
};

inline constexpr double kNoTime = std::numeric_limits<double>::quiet_NaN();

// One cardiac cycle, from its LV activation to the next. Times in record seconds; NaN when the
// event does not fall inside the simulated window.
struct BeatHemodynamics {
  std::int32_t beat = 0;  // consecutive; beat 0 is the first beat of the series
  double atrial_activation_s = kNoTime;
  double lv_activation_s = kNoTime;  // Q-wave equivalent
  double rv_activation_s = kNoTime;
  double rr_s = 0;
  double resp_phase = 0;   // at LV activation
  bool inspiration = false;
  // Valve transitions of this beat (closures of the AV valves start it).
  double mitral_close_s = kNoTime, tricuspid_close_s = kNoTime;
  double aortic_open_s = kNoTime, pulmonic_open_s = kNoTime;
  double aortic_close_s = kNoTime, pulmonic_close_s = kNoTime;
  double mitral_open_s = kNoTime, tricuspid_open_s = kNoTime;
  // Physiology of the beat.
  double lv_edv_ml = 0, lv_esv_ml = 0, rv_edv_ml = 0, rv_esv_ml = 0;
  double lv_stroke_volume_ml = 0, rv_stroke_volume_ml = 0;   // forward (outflow-valve) volume
  double lv_ejection_fraction = 0, rv_ejection_fraction = 0; // fraction
  double lv_dpdt_max_mmhg_s = 0, rv_dpdt_max_mmhg_s = 0;
  double aortic_systolic_mmhg = 0, aortic_diastolic_mmhg = 0;
  double pa_systolic_mmhg = 0, pa_diastolic_mmhg = 0, pa_mean_mmhg = 0;
  double rv_systolic_mmhg = 0, rv_edp_mmhg = 0;
  double lv_edp_mmhg = 0, la_mean_mmhg = 0, ra_mean_mmhg = 0;
  double cardiac_output_l_min = 0;  // lv stroke volume x 60 / rr
};

struct CirculationResult {
  double duration_s = 0;  // the recorded window is [0, duration_s)
  HemodynamicSeries series;
  std::vector<BeatHemodynamics> beats;
  std::vector<ValveTransition> transitions;
  std::uint64_t ode_steps = 0;
  std::uint64_t rhs_evaluations = 0;
  double inspiration_fraction = 0.4;  // share of a breath spent in inspiration
};

}  // namespace stethogen::gen
