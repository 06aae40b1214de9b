#include "generator/circulation/reference_case.hpp"

#include <fmt/format.h>

namespace stethogen::gen {

namespace {

std::string number_list(const std::vector<double>& v) {
  std::string out = "[";
  for (std::size_t i = 0; i < v.size(); ++i) out += fmt::format("{}{:.17g}", i ? "," : "", v[i]);
  return out + "]";
}

std::string chamber(const ChamberParams& c) {
  return fmt::format(R"({{"ees":{:.17g},"v0":{:.17g},"a":{:.17g},"b":{:.17g}}})", c.ees_mmhg_per_ml, c.v0_ml,
                     c.ed_a_mmhg, c.ed_b_per_ml);
}

std::string valve(const ValveParams& v) {
  return fmt::format(
      R"({{"area":{:.17g},"length":{:.17g},"k_open":{:.17g},"k_close":{:.17g},"max_frac":{:.17g},"min_frac":{:.17g},"dp_open":{:.17g},"dp_close":{:.17g}}})",
      v.annulus_area_cm2, v.effective_length_cm, v.k_open_per_mmhg_s, v.k_close_per_mmhg_s, v.max_open_fraction,
      v.min_open_fraction, v.open_threshold_mmhg, v.close_threshold_mmhg);
}

std::string compliance(const ComplianceParams& c) {
  return fmt::format(R"({{"c":{:.17g},"v0":{:.17g}}})", c.compliance_ml_per_mmhg, c.unstressed_ml);
}

std::string pulses(const std::vector<ActivationPulse>& list) {
  std::string out = "[";
  for (std::size_t i = 0; i < list.size(); ++i) {
    const ActivationPulse& p = list[i];
    out += fmt::format("{}[{:.17g},{:.17g},{:.17g},{:.17g},{:.17g},{:.17g}]", i ? "," : "", p.onset_s, p.a_s, p.b_s,
                       p.norm, p.m1, p.m2);
  }
  return out + "]";
}

}  // namespace

std::string reference_case_json(const EngineRun& run, double end_s, const std::vector<double>& sample_times_s) {
  const CirculationParams& p = run.setup.circulation;
  const Respiration& r = run.rhythm.respiration;
  std::vector<double> state(run.series_start_state.begin(), run.series_start_state.end());
  std::string j = "{";
  j += fmt::format(R"("lv":{},"rv":{},"la":{},"ra":{},)", chamber(p.lv), chamber(p.rv), chamber(p.la), chamber(p.ra));
  j += fmt::format(R"("mitral":{},"aortic":{},"tricuspid":{},"pulmonic":{},)", valve(p.mitral), valve(p.aortic),
                   valve(p.tricuspid), valve(p.pulmonic));
  j += fmt::format(R"("pericardium":[{:.17g},{:.17g},{:.17g}],)", p.pericardium_p0_mmhg, p.pericardium_lambda_per_ml,
                   p.pericardium_v0_ml);
  j += fmt::format(R"("aorta":{},"systemic_arteries":{},"systemic_veins":{},"thoracic_veins":{},)", compliance(p.aorta),
                   compliance(p.systemic_arteries), compliance(p.systemic_veins), compliance(p.thoracic_veins));
  j += fmt::format(R"("pulmonary_artery":{},"lung_arteries":{},"pulmonary_veins":{},)", compliance(p.pulmonary_artery),
                   compliance(p.lung_arteries), compliance(p.pulmonary_veins));
  j += fmt::format(
      R"("r_aortic":{:.17g},"l_aortic":{:.17g},"r_systemic":{:.17g},"r_venous":{:.17g},"r_caval":{:.17g},"r_pulm_char":{:.17g},"l_pulm":{:.17g},"r_pulm":{:.17g},"r_pulm_venous":{:.17g},"sleeve_gain":{:.17g},)",
      p.aortic_resistance_mmhg_s_per_ml, p.aortic_inertance_mmhg_s2_per_ml, p.systemic_resistance_mmhg_s_per_ml,
      p.venous_resistance_mmhg_s_per_ml, p.caval_resistance_mmhg_s_per_ml, p.pulmonary_char_resistance_mmhg_s_per_ml,
      p.pulmonary_inertance_mmhg_s2_per_ml, p.pulmonary_resistance_mmhg_s_per_ml,
      p.pulmonary_venous_resistance_mmhg_s_per_ml, p.pulmonary_venous_sleeve_gain);
  j += fmt::format(R"("density":{:.17g},"abdominal":{:.17g},"lung_gain":{:.17g},)", p.blood_density_g_per_cm3,
                   p.abdominal_pressure_per_pleural, p.lung_capacitance_per_mmhg);
  j += fmt::format(
      R"("respiration":{{"starts":{},"period":{:.17g},"inspiration_fraction":{:.17g},"end_expiratory":{:.17g},"depth":{:.17g}}},)",
      number_list(r.breath_starts_s()), r.nominal_period_s(), r.inspiration_fraction(), r.end_expiratory_mmhg(),
      r.depth_mmhg());
  j += fmt::format(R"("pulses":{{"la":{},"lv":{},"ra":{},"rv":{}}},"hill_cutoff":{:.17g},)", pulses(run.activation.pulses[kLa]),
                   pulses(run.activation.pulses[kLv]), pulses(run.activation.pulses[kRa]),
                   pulses(run.activation.pulses[kRv]), kHillCutoff);
  j += fmt::format(R"("leaflet_threshold":{:.17g},"t0":{:.17g},"t1":{:.17g},"state":{},"sample_times":{})",
                   kLeafletOpenThreshold, run.result.series.t0_s, end_s, number_list(state), number_list(sample_times_s));
  return j + "}";
}

}  // namespace stethogen::gen
