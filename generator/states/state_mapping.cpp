#include "generator/states/state_mapping.hpp"

#include <algorithm>

#include "core/check.hpp"

namespace stethogen::gen {

namespace {

// Exercise (Higginbotham et al. 1986, Circ Res 58:281: HR 73 -> 167 bpm, cardiac index x3.2,
// stroke volume x1.4 with a plateau, systemic resistance down, diastolic pressure flat).
void apply_exercise(double x, EngineSetup& s, double hr_rest) {
  CirculationParams& c = s.circulation;
  s.rhythm.heart_rate_bpm = hr_rest + 94.0 * x;  // +94 bpm at peak (73 -> 167)
  // Sympathetic inotropy: end-systolic elastance up (contractility about doubles at peak).
  c.lv.ees_mmhg_per_ml *= 1.0 + 1.2 * x;
  c.rv.ees_mmhg_per_ml *= 1.0 + 1.2 * x;
  c.la.ees_mmhg_per_ml *= 1.0 + 0.6 * x;
  c.ra.ees_mmhg_per_ml *= 1.0 + 0.6 * x;
  // Faster contraction and relaxation (lusitropy) shorten electromechanical systole.
  c.timing.lv_duration_scale *= 1.0 - 0.12 * x;
  c.timing.rv_duration_scale *= 1.0 - 0.12 * x;
  // Metabolic vasodilation in working muscle: systemic resistance down to 0.37x at peak, most of
  // the fall early (conductance rises linearly with intensity);
  // pulmonary vascular recruitment lowers PVR.
  c.systemic_resistance_mmhg_s_per_ml /= 1.0 + 1.7 * x;
  c.pulmonary_resistance_mmhg_s_per_ml *= 1.0 - 0.35 * x;
  // Venoconstriction and the muscle pump: unstressed venous volume mobilised, venous return eased.
  c.systemic_veins.unstressed_ml -= 400.0 * x;
  c.venous_resistance_mmhg_s_per_ml *= 1.0 - 0.3 * x;
  s.rhythm.pr_interval_s *= 1.0 - 0.2 * x;
  // Breathing deepens and quickens; vagal withdrawal removes most respiratory sinus arrhythmia.
  s.rhythm.respiration_rate_per_min *= 1.0 + 1.0 * x;
  s.rhythm.respiration_depth_mmhg *= 1.0 + 1.0 * x;
  s.rhythm.rsa_fraction *= 1.0 - 0.8 * x;
}

// A failing left ventricle leans on the atrial kick: the left atrium's booster contribution to
// filling grows (atrial share of LV stroke volume 22 % in controls, 35 % after infarction and
// 56 % at cardiac index <= 2 L/min/m2: Rahimtoola et al. 1975, Am J Med 59:686, authors from
// memory), so the LA end-systolic elastance doubles at LV-failure severity 1. Without it the
// distended atrium's active and passive pressures nearly coincide and its contraction cannot
// reopen a mitral valve that closed in mid-diastole.
constexpr double kAtrialBoosterGain = 1.0;

// Systolic failure of one ventricle: contractility down, remodelling (ESPVR shifted right),
// prolonged and slowed contraction; neurohumoral compensation raises stressed volume, heart rate
// and systemic resistance.
void apply_ventricular_failure(double s, double weight, ChamberParams& v, double& duration_scale,
                               double& preload_exponent, double ees_loss, double remodel_ml) {
  v.ees_mmhg_per_ml *= 1.0 - ees_loss * s * weight;
  preload_exponent *= 1.0 - s * weight;  // blunted Frank-Starling response
  v.v0_ml += remodel_ml * s * weight;
  v.ed_b_per_ml *= 1.0 + 0.2 * s * weight;
  duration_scale *= 1.0 + 0.2 * s * weight;
}

void apply_compensation(double s, EngineSetup& e, double hr_rest, double hr_gain, double volume_ml,
                        double svr_gain) {
  e.rhythm.heart_rate_bpm = hr_rest * (1.0 + hr_gain * s);
  e.circulation.systemic_veins.unstressed_ml -= volume_ml * s;
  e.circulation.systemic_resistance_mmhg_s_per_ml *= 1.0 + svr_gain * s;
  e.rhythm.rsa_fraction *= 1.0 - 0.5 * s;  // depressed HRV in heart failure
}

}  // namespace

EngineSetup map_subject_to_engine(const SubjectSpec& subject) {
  const SubjectParams& sp = subject.params;
  check_in_range("exercise_intensity", subject.exercise_intensity, 0.0, 1.0);
  check_in_range("severity", subject.severity, 0.0, 1.0);
  check_in_range("duration_s", sp.duration_s, 0.5, 3600.0);
  if (sp.heart_rate_bpm) check_in_range("heart_rate_bpm", *sp.heart_rate_bpm, 30.0, 220.0);
  check_in_range("blood_volume_ml", sp.blood_volume_ml, 2500.0, 8000.0);

  EngineSetup e;
  e.circulation = default_circulation_params();
  e.rhythm.rsa_fraction = sp.rsa_fraction;
  e.rhythm.lf_fraction = sp.lf_fraction;
  e.rhythm.respiration_rate_per_min = sp.respiration_rate_per_min;
  e.rhythm.respiration_depth_mmhg = sp.respiration_depth_mmhg;
  e.rhythm.pr_interval_s = sp.pr_interval_ms * 1e-3;
  e.rhythm.lv_rv_delay_s = sp.lv_rv_delay_ms * 1e-3;

  // Blood volume scales every vascular unstressed volume and hence the stressed volume.
  CirculationParams& c = e.circulation;
  const double scale = sp.blood_volume_ml / 5000.0;
  for (ComplianceParams* v : {&c.aorta, &c.systemic_arteries, &c.systemic_veins, &c.thoracic_veins,
                              &c.pulmonary_artery, &c.lung_arteries, &c.pulmonary_veins})
    v->unstressed_ml *= scale;
  c.blood_volume_ml = sp.blood_volume_ml;

  const double hr_rest = sp.heart_rate_bpm.value_or(kDefaultRestingHeartRateBpm);
  e.rhythm.heart_rate_bpm = hr_rest;
  const double s = subject.severity;
  switch (subject.state) {
    case State::rest:
      break;
    case State::exercise:
      apply_exercise(subject.exercise_intensity, e, hr_rest);
      break;
    case State::lv_failure:
      apply_ventricular_failure(s, 1.0, c.lv, c.timing.lv_duration_scale, c.timing.lv_preload_duration_exponent, 0.75, 60.0);
      c.la.ees_mmhg_per_ml *= 1.0 + kAtrialBoosterGain * s;
      c.pulmonary_resistance_mmhg_s_per_ml *= 1.0 + 0.5 * s;  // reactive pulmonary vasoconstriction
      apply_compensation(s, e, hr_rest, 0.25, 450.0, 0.3);
      break;
    case State::rv_failure:
      // Right heart failure most often follows pulmonary hypertension: PVR up to 3x.
      apply_ventricular_failure(s, 1.0, c.rv, c.timing.rv_duration_scale, c.timing.rv_preload_duration_exponent, 0.35, 60.0);
      c.pulmonary_resistance_mmhg_s_per_ml *= 1.0 + 2.0 * s;
      apply_compensation(s, e, hr_rest, 0.2, 500.0, 0.15);
      break;
    case State::global_failure:
      apply_ventricular_failure(s, 1.0, c.lv, c.timing.lv_duration_scale, c.timing.lv_preload_duration_exponent, 0.7, 50.0);
      c.la.ees_mmhg_per_ml *= 1.0 + kAtrialBoosterGain * s;
      apply_ventricular_failure(s, 1.0, c.rv, c.timing.rv_duration_scale, c.timing.rv_preload_duration_exponent, 0.6, 40.0);
      apply_compensation(s, e, hr_rest, 0.3, 500.0, 0.3);
      break;
  }
  e.rhythm.heart_rate_bpm = std::min(e.rhythm.heart_rate_bpm, std::max(hr_rest, kMaxStateHeartRateBpm));
  // Keep the state effects inside what the beat schedule accepts (check_rhythm_params), so a
  // recipe at the edge of its ranges (PR 80 ms, 40 breaths/min, 20 mmHg swing) still makes a record.
  e.rhythm.pr_interval_s = std::max(e.rhythm.pr_interval_s, 0.08);
  e.rhythm.respiration_rate_per_min = std::min(e.rhythm.respiration_rate_per_min, 60.0);
  e.rhythm.respiration_depth_mmhg = std::min(e.rhythm.respiration_depth_mmhg, 20.0);
  return e;
}

}  // namespace stethogen::gen
