#include "generator/circulation/model.hpp"

#include <algorithm>
#include <cmath>

#include "generator/circulation/vector_exp.hpp"

namespace stethogen::gen {

namespace {

constexpr double kDynPerMmhg = 1333.22;

// Time-varying elastance chamber (Suga et al. 1973; exponential EDPVR of Smith et al. 2004);
// dv = V - V0, stiffening = exp(B dv).
inline double chamber_pressure(const ChamberParams& c, double e, double dv, double stiffening) {
  return e * c.ees_mmhg_per_ml * dv + (1.0 - e) * c.ed_a_mmhg * (stiffening - 1.0);
}

inline double compliance_pressure(const ComplianceParams& c, double inverse_compliance, double v) {
  return (v - c.unstressed_ml) * inverse_compliance;
}

}  // namespace

CirculationModel::CirculationModel(const CirculationParams& params, const ActivationPlan* activation,
                                   const Respiration* respiration)
    : p_(params), activation_(activation), respiration_(respiration) {
  const double rho = p_.blood_density_g_per_cm3;
  valves_ = {coefficients(p_.mitral, rho), coefficients(p_.aortic, rho), coefficients(p_.tricuspid, rho),
             coefficients(p_.pulmonic, rho)};
  const auto inv_c = [](const ComplianceParams& c) { return 1.0 / c.compliance_ml_per_mmhg; };
  inverse_ = {inv_c(p_.aorta), inv_c(p_.systemic_arteries), inv_c(p_.systemic_veins), inv_c(p_.thoracic_veins),
              inv_c(p_.pulmonary_artery), inv_c(p_.lung_arteries), inv_c(p_.pulmonary_veins),
              1.0 / p_.systemic_resistance_mmhg_s_per_ml, 1.0 / p_.venous_resistance_mmhg_s_per_ml,
              1.0 / p_.caval_resistance_mmhg_s_per_ml, 1.0 / p_.pulmonary_resistance_mmhg_s_per_ml,
              1.0 / p_.aortic_inertance_mmhg_s2_per_ml, 1.0 / p_.pulmonary_inertance_mmhg_s2_per_ml};
}

CirculationModel::ValveCoefficients CirculationModel::coefficients(const ValveParams& v, double rho) {
  return {rho / (2.0 * kDynPerMmhg), kDynPerMmhg / (rho * v.effective_length_cm),
          v.annulus_area_cm2 * v.max_open_fraction, v.annulus_area_cm2 * v.min_open_fraction,
          v.k_open_per_mmhg_s, v.k_close_per_mmhg_s, v.open_threshold_mmhg, v.close_threshold_mmhg};
}

// Mynard et al. 2012: dp = B q|q| + L dq/dt over A_eff = A_closed + (A_open - A_closed) zeta;
// the leaflets open at (1 - zeta) K_vo (dp - dp_open) above dp_open and close at
// zeta K_vc (dp - dp_close) below dp_close. Inlined into rhs, its only caller (four calls each).
[[gnu::always_inline]] inline void CirculationModel::valve(const ValveCoefficients& c, double dp, double q, double zeta, double& dq,
                             double& dzeta) {
  const double z = std::clamp(zeta, 0.0, 1.0);
  const double area = c.area_closed_cm2 + (c.area_open_cm2 - c.area_closed_cm2) * z;
  const double inverse_area = 1.0 / area;
  const double bernoulli = c.bernoulli_factor * inverse_area * inverse_area;
  dq = (dp - bernoulli * q * std::fabs(q)) * (area * c.inverse_inertance_factor);
  if (dp > c.dp_open) dzeta = (1.0 - z) * c.k_open * (dp - c.dp_open);
  else if (dp < c.dp_close) dzeta = z * c.k_close * (dp - c.dp_close);
  else dzeta = 0.0;
}

void CirculationModel::outputs(const CirculationState& x, double t, ModelOutputs& o) const {
  const double fall = respiration_->pleural_fall_mmhg(t, breath_hint_);  // below end-expiration
  const double pt = respiration_->end_expiratory_mmhg() - fall;
  const double lung_factor = 1.0 / (1.0 + p_.lung_capacitance_per_mmhg * fall);
  activation_->activations(t, activation_cursor_, o.activation);
  // The five exponentials two at a time (fast::exp2x, the same bits on every x86-64 machine).
  const double dv_la = x[kVla] - p_.la.v0_ml, dv_lv = x[kVlv] - p_.lv.v0_ml;
  const double dv_ra = x[kVra] - p_.ra.v0_ml, dv_rv = x[kVrv] - p_.rv.v0_ml;
  const double vpcd = x[kVlv] + x[kVrv] - p_.pericardium_v0_ml;
  const double pericardial_exponent = p_.pericardium_lambda_per_ml * vpcd;
  const fast::Double2 left = fast::exp2x(fast::Double2{p_.la.ed_b_per_ml * dv_la, p_.lv.ed_b_per_ml * dv_lv});
  const fast::Double2 right = fast::exp2x(fast::Double2{p_.ra.ed_b_per_ml * dv_ra, p_.rv.ed_b_per_ml * dv_rv});
  const fast::Double2 pericardial = fast::exp2x(fast::Double2{pericardial_exponent, pericardial_exponent});
  o.p_pericardium = p_.pericardium_p0_mmhg * (pericardial[0] - 1.0);
  o.p_thorax = pt;
  o.p_la = chamber_pressure(p_.la, o.activation[kLa], dv_la, left[0]) + pt;
  o.p_ra = chamber_pressure(p_.ra, o.activation[kRa], dv_ra, right[0]) + pt;
  o.p_lv = chamber_pressure(p_.lv, o.activation[kLv], dv_lv, left[1]) + o.p_pericardium + pt;
  o.p_rv = chamber_pressure(p_.rv, o.activation[kRv], dv_rv, right[1]) + o.p_pericardium + pt;
  // Intrathoracic vessels feel the pleural pressure; the systemic arteries and veins do not.
  o.p_ao = compliance_pressure(p_.aorta, inverse_.aorta, x[kVao]) + pt;
  o.p_sa = compliance_pressure(p_.systemic_arteries, inverse_.systemic_arteries, x[kVsa]);
  o.p_sv = compliance_pressure(p_.systemic_veins, inverse_.systemic_veins, x[kVsv]) +
           p_.abdominal_pressure_per_pleural * fall;
  o.p_tv = compliance_pressure(p_.thoracic_veins, inverse_.thoracic_veins, x[kVtv]) + pt;
  o.p_pa = compliance_pressure(p_.pulmonary_artery, inverse_.pulmonary_artery, x[kVpa]) * lung_factor + pt;
  o.p_lu = compliance_pressure(p_.lung_arteries, inverse_.lung_arteries, x[kVlu]) * lung_factor + pt;
  o.p_pv = compliance_pressure(p_.pulmonary_veins, inverse_.pulmonary_veins, x[kVpv]) + pt;
}

void CirculationModel::rhs(const CirculationState& x, CirculationState& d, double t) const {
  ++rhs_evaluations_;
  ModelOutputs o;
  outputs(x, t, o);
  const double q_sys = (o.p_sa - o.p_sv) * inverse_.systemic;
  const double q_ven = (o.p_sv - o.p_tv) * inverse_.venous;
  const double q_cav = (o.p_tv - o.p_ra) * inverse_.caval;
  const double q_lung = (o.p_lu - o.p_pv) * inverse_.pulmonary;
  const double q_pv = (o.p_pv - o.p_la) / (p_.pulmonary_venous_resistance_mmhg_s_per_ml *
                                           (1.0 + p_.pulmonary_venous_sleeve_gain * o.activation[kLa]));

  valve(valves_[0], o.p_la - o.p_lv, x[kQmi], x[kZmi], d[kQmi], d[kZmi]);
  valve(valves_[1], o.p_lv - o.p_ao, x[kQao], x[kZao], d[kQao], d[kZao]);
  valve(valves_[2], o.p_ra - o.p_rv, x[kQtr], x[kZtr], d[kQtr], d[kZtr]);
  valve(valves_[3], o.p_rv - o.p_pa, x[kQpu], x[kZpu], d[kQpu], d[kZpu]);

  d[kQsa] = (o.p_ao - o.p_sa - p_.aortic_resistance_mmhg_s_per_ml * x[kQsa]) * inverse_.aortic_inertance;
  d[kQpa] = (o.p_pa - o.p_lu - p_.pulmonary_char_resistance_mmhg_s_per_ml * x[kQpa]) * inverse_.pulmonary_inertance;

  d[kVla] = q_pv - x[kQmi];
  d[kVlv] = x[kQmi] - x[kQao];
  d[kVao] = x[kQao] - x[kQsa];
  d[kVsa] = x[kQsa] - q_sys;
  d[kVsv] = q_sys - q_ven;
  d[kVtv] = q_ven - q_cav;
  d[kVra] = q_cav - x[kQtr];
  d[kVrv] = x[kQtr] - x[kQpu];
  d[kVpa] = x[kQpu] - x[kQpa];
  d[kVlu] = x[kQpa] - q_lung;
  d[kVpv] = q_lung - q_pv;
}

double total_volume_ml(const CirculationState& x) {
  double v = 0;
  for (int i = kVla; i <= kVpv; ++i) v += x[i];
  return v;
}

CirculationState initial_state(const CirculationParams& p) {
  CirculationState x{};
  auto vol = [](const ComplianceParams& c, double p_mmhg) { return c.unstressed_ml + c.compliance_ml_per_mmhg * p_mmhg; };
  x[kVla] = 60;
  x[kVlv] = 120;
  x[kVra] = 60;
  x[kVrv] = 130;
  x[kVao] = vol(p.aorta, 90);
  x[kVsa] = vol(p.systemic_arteries, 90);
  x[kVtv] = vol(p.thoracic_veins, 6);
  x[kVpa] = vol(p.pulmonary_artery, 16);
  x[kVlu] = vol(p.lung_arteries, 13);
  x[kVpv] = vol(p.pulmonary_veins, 10);
  // The systemic veins take whatever blood is left (they hold most of it).
  x[kVsv] = 0;
  x[kVsv] = std::max(p.blood_volume_ml - total_volume_ml(x), 0.5 * p.systemic_veins.unstressed_ml);
  x[kZmi] = x[kZtr] = 1.0;
  x[kZao] = x[kZpu] = 0.0;
  return x;
}

}  // namespace stethogen::gen
