#include "generator/circulation/parameters.hpp"

#include <string>

#include "core/check.hpp"

namespace stethogen::gen {

namespace {

// Leaflet rate coefficients of Mynard et al. 2012 are given in cm^2 dyn^-1 s^-1; one mmHg is
// 1333.22 dyn/cm^2.
constexpr double kDynPerMmhg = 1333.22;

ValveParams valve(double area_cm2, double length_cm, double k_open_cgs, double k_close_cgs,
                  double close_threshold_mmhg) {
  ValveParams v;
  v.close_threshold_mmhg = close_threshold_mmhg;
  v.annulus_area_cm2 = area_cm2;
  v.effective_length_cm = length_cm;
  v.k_open_per_mmhg_s = k_open_cgs * kDynPerMmhg;
  v.k_close_per_mmhg_s = k_close_cgs * kDynPerMmhg;
  return v;
}

void check_chamber(const std::string& name, const ChamberParams& c) {
  check_positive(name + ".ees_mmhg_per_ml", c.ees_mmhg_per_ml);
  check_non_negative(name + ".v0_ml", c.v0_ml);
  check_positive(name + ".ed_a_mmhg", c.ed_a_mmhg);
  check_positive(name + ".ed_b_per_ml", c.ed_b_per_ml);
}

void check_valve(const std::string& name, const ValveParams& v) {
  check_positive(name + ".annulus_area_cm2", v.annulus_area_cm2);
  check_positive(name + ".effective_length_cm", v.effective_length_cm);
  check_positive(name + ".k_open_per_mmhg_s", v.k_open_per_mmhg_s);
  check_positive(name + ".k_close_per_mmhg_s", v.k_close_per_mmhg_s);
  check_in_range(name + ".max_open_fraction", v.max_open_fraction, 0.05, 1.0);
  check_in_range(name + ".min_open_fraction", v.min_open_fraction, 1e-6, 0.5 * v.max_open_fraction);
  check_in_range(name + ".open_threshold_mmhg", v.open_threshold_mmhg, -5.0, 5.0);
  check_in_range(name + ".close_threshold_mmhg", v.close_threshold_mmhg, -10.0, v.open_threshold_mmhg);
}

void check_compliance(const std::string& name, const ComplianceParams& c) {
  check_positive(name + ".compliance_ml_per_mmhg", c.compliance_ml_per_mmhg);
  check_non_negative(name + ".unstressed_ml", c.unstressed_ml);
}

}  // namespace

CirculationParams default_circulation_params() {
  CirculationParams p;
  // Chambers: elastances and EDPVRs chosen so that volumes and pressures fall in the
  // CHECK_VALUES ranges; orders of magnitude as in Smith et al. 2004 and Mynard et al. 2012.
  p.lv = {2.6, 5.0, 0.45, 0.025};
  p.rv = {0.65, 10.0, 0.55, 0.024};
  p.la = {0.55, 4.0, 0.80, 0.050};
  p.ra = {0.45, 4.0, 0.80, 0.050};
  // Valves: normal adult areas (mitral 4-6, tricuspid 7-9, aortic 3-4, pulmonic 3-4 cm^2, common
  // practice); leaflet rate coefficients of the order of Mynard et al. 2012 (from memory).
  // The AV leaflets ignore the small reverse gradients of diastasis and close with systole.
  // Mitral inertial length 1.5 cm: fitted lengths of a lumped mitral-flow model to porcine
  // data lie at 1.5-2 cm, mean 1.6 (Szabo et al. 2004, tabulated in Waite & Fine 2007, Applied
  // Biofluid Mechanics); with 2 cm the E wave peaked and decelerated late (docs/physiology.md).
  p.mitral = valve(5.0, 1.5, 0.02, 0.02, -2.0);
  p.tricuspid = valve(7.0, 2.0, 0.02, 0.02, -2.0);
  p.aortic = valve(3.5, 1.5, 0.012, 0.012, 0.0);
  p.pulmonic = valve(3.5, 1.5, 0.012, 0.012, 0.0);
  // The pulmonic leaflets need a small forward gradient to open, so the atrial kick into a stiff
  // or failing right ventricle does not float them open before systole.
  p.pulmonic.open_threshold_mmhg = 2.0;
  p.aorta = {0.35, 100.0};
  p.systemic_arteries = {1.2, 600.0};
  p.systemic_veins = {100.0, 2550.0};
  p.thoracic_veins = {8.0, 150.0};
  p.pulmonary_artery = {1.2, 50.0};
  p.lung_arteries = {3.0, 100.0};
  p.pulmonary_veins = {10.0, 200.0};
  p.pulmonary_venous_sleeve_gain = 3.0;
  // Lung inflation raises pulmonary arterial capacitance (Curtiss et al. 1975): +21 % at the
  // default 3 mmHg swing. It pools blood in the lungs on inspiration, so LV stroke volume falls
  // by about 5 % (about 7 % published, from memory; without it 3 %); chosen for that fall with the
  // A2-P2 split checks held (no direct published figure for the capacitance rise is used).
  p.lung_capacitance_per_mmhg = 0.07;
  return p;
}

void check_circulation_params(const CirculationParams& p) {
  check_chamber("lv", p.lv);
  check_chamber("rv", p.rv);
  check_chamber("la", p.la);
  check_chamber("ra", p.ra);
  check_valve("mitral", p.mitral);
  check_valve("tricuspid", p.tricuspid);
  check_valve("aortic", p.aortic);
  check_valve("pulmonic", p.pulmonic);
  check_positive("pericardium_p0_mmhg", p.pericardium_p0_mmhg);
  check_positive("pericardium_lambda_per_ml", p.pericardium_lambda_per_ml);
  check_non_negative("pericardium_v0_ml", p.pericardium_v0_ml);
  check_compliance("aorta", p.aorta);
  check_compliance("systemic_arteries", p.systemic_arteries);
  check_compliance("systemic_veins", p.systemic_veins);
  check_compliance("thoracic_veins", p.thoracic_veins);
  check_compliance("pulmonary_artery", p.pulmonary_artery);
  check_compliance("lung_arteries", p.lung_arteries);
  check_compliance("pulmonary_veins", p.pulmonary_veins);
  check_positive("aortic_resistance_mmhg_s_per_ml", p.aortic_resistance_mmhg_s_per_ml);
  check_positive("aortic_inertance_mmhg_s2_per_ml", p.aortic_inertance_mmhg_s2_per_ml);
  check_positive("systemic_resistance_mmhg_s_per_ml", p.systemic_resistance_mmhg_s_per_ml);
  check_positive("venous_resistance_mmhg_s_per_ml", p.venous_resistance_mmhg_s_per_ml);
  check_positive("caval_resistance_mmhg_s_per_ml", p.caval_resistance_mmhg_s_per_ml);
  check_positive("pulmonary_char_resistance_mmhg_s_per_ml", p.pulmonary_char_resistance_mmhg_s_per_ml);
  check_positive("pulmonary_inertance_mmhg_s2_per_ml", p.pulmonary_inertance_mmhg_s2_per_ml);
  check_positive("pulmonary_resistance_mmhg_s_per_ml", p.pulmonary_resistance_mmhg_s_per_ml);
  check_positive("pulmonary_venous_resistance_mmhg_s_per_ml", p.pulmonary_venous_resistance_mmhg_s_per_ml);
  check_in_range("pulmonary_venous_sleeve_gain", p.pulmonary_venous_sleeve_gain, 0.0, 50.0);
  check_in_range("thorax_end_expiratory_mmhg", p.thorax_end_expiratory_mmhg, -20.0, 10.0);
  check_in_range("abdominal_pressure_per_pleural", p.abdominal_pressure_per_pleural, 0.0, 2.0);
  check_in_range("lung_capacitance_per_mmhg", p.lung_capacitance_per_mmhg, 0.0, 0.5);
  check_in_range("blood_volume_ml", p.blood_volume_ml, 2000.0, 9000.0);
  check_in_range("blood_density_g_per_cm3", p.blood_density_g_per_cm3, 1.0, 1.1);
  const ActivationTiming& t = p.timing;
  check_in_range("timing.lv_electromechanical_delay_s", t.lv_electromechanical_delay_s, 0.0, 0.2);
  check_in_range("timing.rv_extra_delay_s", t.rv_extra_delay_s, -0.1, 0.2);
  check_in_range("timing.atrial_electromechanical_delay_s", t.atrial_electromechanical_delay_s, 0.0, 0.2);
  check_positive("timing.ventricular_period_base_s", t.ventricular_period_base_s);
  check_non_negative("timing.ventricular_period_slope", t.ventricular_period_slope);
  check_in_range("timing.hill_tau1_fraction", t.hill_tau1_fraction, 0.05, 0.6);
  check_in_range("timing.hill_tau2_fraction", t.hill_tau2_fraction, t.hill_tau1_fraction, 0.9);
  check_in_range("timing.hill_m1", t.hill_m1, 1.0, 5.0);
  check_in_range("timing.hill_m2", t.hill_m2, 5.0, 60.0);
  check_in_range("timing.lv_duration_scale", t.lv_duration_scale, 0.5, 2.0);
  check_in_range("timing.rv_duration_scale", t.rv_duration_scale, 0.5, 2.0);
  check_in_range("timing.lv_preload_duration_exponent", t.lv_preload_duration_exponent, 0.0, 3.0);
  check_in_range("timing.rv_preload_duration_exponent", t.rv_preload_duration_exponent, 0.0, 3.0);
  check_in_range("timing.atrial_rise_s", t.atrial_rise_s, 0.01, 0.3);
  check_in_range("timing.atrial_fall_s", t.atrial_fall_s, 0.01, 0.3);
}

}  // namespace stethogen::gen
