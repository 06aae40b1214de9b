// Parameters of the closed-loop circulation (units in every name: mmHg, mL, s, cm).
// Defaults describe a healthy supine adult at rest; docs/physiology.md lists each value with
// its source. generator/states maps a SubjectSpec onto a copy of these defaults.
#pragma once

namespace stethogen::gen {

// A chamber with time-varying elastance: end-systolic linear, end-diastolic exponential
// (Suga, Sagawa & Shoukas 1973, Circ Res 32:314; exponential EDPVR as in Smith et al. 2004,
// Med Eng Phys 26:131):  P = e(t) Ees (V - V0) + (1 - e(t)) A (exp(B (V - V0)) - 1).
struct ChamberParams {
  double ees_mmhg_per_ml = 0;  // end-systolic elastance
  double v0_ml = 0;            // volume at zero end-systolic pressure
  double ed_a_mmhg = 0;        // EDPVR scale
  double ed_b_per_ml = 0;      // EDPVR stiffness exponent
};

// A valve after Mynard, Davidson, Penny & Smolich 2012 (Int J Numer Meth Biomed Eng 28:626):
// Bernoulli loss and inertance over an effective area that follows a leaflet state zeta in [0, 1].
struct ValveParams {
  double annulus_area_cm2 = 0;
  double effective_length_cm = 0;      // inertial length of the jet
  double k_open_per_mmhg_s = 0;        // leaflet opening rate coefficient
  double k_close_per_mmhg_s = 0;       // leaflet closing rate coefficient
  double max_open_fraction = 1.0;      // M_st: < 1 models stenosis
  double min_open_fraction = 1e-4;     // M_rg: leak area when closed; > ~0.01 models regurgitation
  // Pressure thresholds of leaflet motion (Mynard et al. 2012): opening above open_threshold,
  // closing below close_threshold (<= open_threshold), still in between.
  double open_threshold_mmhg = 0.0;
  double close_threshold_mmhg = 0.0;
};

// A linear compliance: P_transmural = (V - unstressed) / compliance.
struct ComplianceParams {
  double compliance_ml_per_mmhg = 0;
  double unstressed_ml = 0;
};

// Electromechanical timing of the chambers relative to the beat's electrical events.
// Ventricles: the double-Hill normalised elastance of Stergiopulos, Meister & Westerhof 1996
// (Am J Physiol 270:H2050) with time constants tau1 = 0.269 T, tau2 = 0.452 T, exponents 1.32 and
// 27.4, where the contraction period T = base + slope * RR grows linearly with the preceding RR
// (the linear heart-rate dependence of systolic time intervals, Weissler et al. 1968).
// Atria: a raised-cosine pulse (Heldt, Shim, Kamm & Mark 2002, J Appl Physiol 92:1239).
struct ActivationTiming {
  double lv_electromechanical_delay_s = 0.045;  // Q to the onset of LV elastance rise
  double rv_extra_delay_s = 0.015;              // RV mechanical onset after LV at zero lv_rv_delay
  double atrial_electromechanical_delay_s = 0.070;  // P onset to atrial contraction
  double ventricular_period_base_s = 0.385, ventricular_period_slope = 0.50;
  double hill_tau1_fraction = 0.269, hill_tau2_fraction = 0.452;
  double hill_m1 = 1.32, hill_m2 = 18.0;
  // RV contraction is shorter than the LV one (its ejection still lasts longer: low pulmonary
  // impedance); states multiply both scales (failure, exercise).
  double lv_duration_scale = 1.0, rv_duration_scale = 0.96;
  double atrial_rise_s = 0.090, atrial_fall_s = 0.100;
  // Preload-dependent prolongation of contraction, which the elastance model lacks: at a given
  // heart rate, ejection lasts longer when more blood is ejected (Weissler, Peeler & Roehll 1961,
  // Am Heart J 62:367, from memory). Each beat's ventricular durations are scaled by
  // (V / V_mean)^exponent, V the ventricular volume just before its contraction and V_mean
  // a running mean over about one breath; the factor is clamped to [0.85, 1.2]. Failing
  // myocardium has a blunted Frank-Starling response (Schwinger et al. 1994, Circ Res 74:959,
  // from memory), so the failure states lower the exponent of the failing ventricle.
  double lv_preload_duration_exponent = 0.8;
  double rv_preload_duration_exponent = 0.8;
};

struct CirculationParams {
  ChamberParams lv, rv, la, ra;
  ValveParams mitral, tricuspid, aortic, pulmonic;
  // Pericardium around both ventricles (Smith et al. 2004): P = p0 (exp(lambda (Vlv+Vrv - v0)) - 1).
  double pericardium_p0_mmhg = 0.5;
  double pericardium_lambda_per_ml = 0.015;
  double pericardium_v0_ml = 230.0;
  // Systemic side: thoracic aorta -> (resistance + inertance) -> arteries -> resistance -> veins
  // -> resistance -> thoracic veins -> resistance -> right atrium.
  ComplianceParams aorta, systemic_arteries, systemic_veins, thoracic_veins;
  double aortic_resistance_mmhg_s_per_ml = 0.04;
  double aortic_inertance_mmhg_s2_per_ml = 0.0005;
  double systemic_resistance_mmhg_s_per_ml = 0.95;
  double venous_resistance_mmhg_s_per_ml = 0.03;
  double caval_resistance_mmhg_s_per_ml = 0.008;
  // Pulmonary side: main pulmonary artery -> (resistance + inertance) -> lung arteries ->
  // resistance -> pulmonary veins -> resistance -> left atrium.
  ComplianceParams pulmonary_artery, lung_arteries, pulmonary_veins;
  double pulmonary_char_resistance_mmhg_s_per_ml = 0.01;
  double pulmonary_inertance_mmhg_s2_per_ml = 0.0003;
  double pulmonary_resistance_mmhg_s_per_ml = 0.06;
  double pulmonary_venous_resistance_mmhg_s_per_ml = 0.005;
  // The myocardial sleeves around the pulmonary-vein ostia contract with the atrium and narrow
  // them, limiting reflux into the veins during atrial systole (Nathan & Eliakim 1966,
  // Circulation 34:412, from memory): the pulmonary venous resistance is multiplied by
  // (1 + gain * e_la(t)), e_la the left atrial activation. Without it more than half of the
  // resting atrial stroke went back into the veins (peak 410 mL/s, about 80 cm/s over 5 cm^2 of
  // ostia, against a normal reversal velocity below 35 cm/s: Rossvoll & Hatle 1993, J Am Coll
  // Cardiol 21:1687, from memory); gain 3 brings it to 250 mL/s, two fifths of the stroke.
  // A larger gain closes the mitral valve too early after the kick (M1-T1 split > 35 ms).
  double pulmonary_venous_sleeve_gain = 0.0;
  // Thorax: pleural pressure at end-expiration; respiration lowers it by the subject's depth.
  double thorax_end_expiratory_mmhg = -3.0;
  // Respiratory mechanics beyond the pleural swing (fractions of the swing at end-inspiration):
  // the descending diaphragm raises abdominal pressure on the systemic veins (abdominal pump),
  // and lung inflation raises pulmonary arterial capacitance, lengthening the pulmonary hangout
  // interval (the mechanism of inspiratory P2 delay, Curtiss et al. 1975, Circulation 51:157).
  double abdominal_pressure_per_pleural = 1.0;   // mmHg abdominal rise per mmHg pleural fall
  double lung_capacitance_per_mmhg = 0.0;       // relative compliance rise per mmHg of pleural fall
  double blood_volume_ml = 5000.0;
  double blood_density_g_per_cm3 = 1.06;
  ActivationTiming timing;
};

// The healthy resting default set.
CirculationParams default_circulation_params();

// Throws InputError naming the first parameter out of its physical range.
void check_circulation_params(const CirculationParams& p);

}  // namespace stethogen::gen
