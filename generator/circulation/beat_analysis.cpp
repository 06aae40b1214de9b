#include "generator/circulation/beat_analysis.hpp"

#include <algorithm>
#include <cmath>

namespace stethogen::gen {

double series_value_at(const HemodynamicSeries& s, const std::vector<double>& ch, double t_s) {
  const double u = (t_s - s.t0_s) * s.rate_hz;
  if (u <= 0) return ch.front();
  const std::size_t k = static_cast<std::size_t>(u);
  if (k + 1 >= ch.size()) return ch.back();
  const double f = u - static_cast<double>(k);
  return ch[k] + f * (ch[k + 1] - ch[k]);
}

namespace {

struct Window {
  std::size_t begin, end;  // sample indices [begin, end)
};

// Four independent running extremes: the series is finite (the integrator checks every
// step), where the maximum does not depend on the order, and the comparisons no longer wait on
// each other. The same values as max_element / min_element.
template <class Better>
double extreme_of(const std::vector<double>& v, Window w, Better better) {
  const double* x = v.data();
  double e[4] = {x[w.begin], x[w.begin], x[w.begin], x[w.begin]};
  std::size_t k = w.begin;
  for (; k + 4 <= w.end; k += 4)
    for (int j = 0; j < 4; ++j) e[j] = better(x[k + j], e[j]) ? x[k + j] : e[j];
  for (; k < w.end; ++k) e[0] = better(x[k], e[0]) ? x[k] : e[0];
  for (int j = 1; j < 4; ++j) e[0] = better(e[j], e[0]) ? e[j] : e[0];
  return e[0];
}
double max_of(const std::vector<double>& v, Window w) {
  return extreme_of(v, w, [](double a, double b) { return a > b; });
}
double min_of(const std::vector<double>& v, Window w) {
  return extreme_of(v, w, [](double a, double b) { return a < b; });
}
double mean_of(const std::vector<double>& v, Window w) {
  double sum = 0;
  for (std::size_t k = w.begin; k < w.end; ++k) sum += v[k];
  return sum / static_cast<double>(w.end - w.begin);
}
double integral_of(const std::vector<double>& v, Window w, double rate_hz) {
  double sum = 0;
  for (std::size_t k = w.begin; k < w.end; ++k) sum += v[k];
  return sum / rate_hz;
}
double max_derivative(const std::vector<double>& v, Window w, double rate_hz) {
  const std::size_t begin = std::max<std::size_t>(w.begin, 1), end = std::min(w.end, v.size() - 1);
  const double* x = v.data();
  double best[4] = {-INFINITY, -INFINITY, -INFINITY, -INFINITY};
  std::size_t k = begin;
  for (; k + 4 <= end; k += 4)
    for (int j = 0; j < 4; ++j) best[j] = std::max(best[j], (x[k + j + 1] - x[k + j - 1]) * 0.5 * rate_hz);
  for (; k < end; ++k) best[0] = std::max(best[0], (x[k + 1] - x[k - 1]) * 0.5 * rate_hz);
  return std::max(std::max(best[0], best[1]), std::max(best[2], best[3]));
}

// First transition of the valve and direction inside [lo, hi), or NaN.
double first_transition(const std::vector<ValveTransition>& tr, Valve valve, bool opening, double lo, double hi) {
  for (const auto& e : tr)
    if (e.valve == valve && e.opening == opening && e.time_s >= lo && e.time_s < hi) return e.time_s;
  return kNoTime;
}
// Last transition of the valve and direction inside [lo, hi), or NaN.
double last_transition(const std::vector<ValveTransition>& tr, Valve valve, bool opening, double lo, double hi) {
  double found = kNoTime;
  for (const auto& e : tr)
    if (e.valve == valve && e.opening == opening && e.time_s >= lo && e.time_s < hi) found = e.time_s;
  return found;
}

// Inflow closure, outflow opening and closure, inflow reopening of one ventricle.
struct SideEvents {
  double inflow_close, outflow_open, outflow_close, inflow_open;
};
SideEvents side_events(const std::vector<ValveTransition>& tr, Valve inflow, Valve outflow, double lo, double hi) {
  SideEvents s;
  s.outflow_open = first_transition(tr, outflow, true, lo, hi);
  s.outflow_close = std::isnan(s.outflow_open) ? kNoTime : first_transition(tr, outflow, false, s.outflow_open, hi);
  // The inflow valve's closure of this beat is its last closing before mid-ejection (a slowly
  // closing AV valve may finish just after the outflow valve opens).
  const double mid_ejection = std::isnan(s.outflow_close) ? hi : 0.5 * (s.outflow_open + s.outflow_close);
  s.inflow_close = last_transition(tr, inflow, false, lo, mid_ejection);
  // Its reopening is the first opening after mid-ejection (with a low pulmonary pressure the
  // tricuspid may reopen just before the pulmonic valve has finished closing).
  s.inflow_open = std::isnan(s.outflow_close) ? kNoTime : first_transition(tr, inflow, true, mid_ejection, hi);
  return s;
}

}  // namespace

std::vector<BeatHemodynamics> analyse_beats(const HemodynamicSeries& series, const std::vector<double>& q_s,
                                            const ActivationPlan& activation, const Respiration& respiration,
                                            const BeatTiming& timing, std::vector<ValveTransition>& transitions) {
  std::vector<BeatHemodynamics> beats;
  const double t_first = series.t0_s;
  const double t_last = series.time_at(series.size() - 1);
  std::size_t first_plan_beat = q_s.size();
  for (std::size_t n = 0; n + 1 < q_s.size(); ++n) {
    if (q_s[n] < t_first || q_s[n + 1] > t_last) continue;
    if (first_plan_beat == q_s.size()) first_plan_beat = n;
    const double rr = q_s[n + 1] - q_s[n];
    // Transitions belong to the beat whose window, shifted back by half the PR interval, holds them
    // (an AV valve may close just before Q after the atrial kick).
    const double shift = std::min(0.5 * timing.pr_interval_s, 0.25 * rr);
    const double lo = q_s[n] - shift, hi = q_s[n + 1] - shift;
    BeatHemodynamics b;
    b.beat = static_cast<std::int32_t>(n - first_plan_beat);
    b.lv_activation_s = q_s[n];
    b.atrial_activation_s = q_s[n] - timing.pr_interval_s;
    b.rv_activation_s = q_s[n] + timing.lv_rv_delay_s;
    b.rr_s = rr;
    b.resp_phase = respiration.phase(q_s[n]);
    b.inspiration = respiration.inspiration(q_s[n]);
    const SideEvents left = side_events(transitions, Valve::mitral, Valve::aortic, lo, hi);
    const SideEvents right = side_events(transitions, Valve::tricuspid, Valve::pulmonic, lo, hi);
    b.mitral_close_s = left.inflow_close;
    b.aortic_open_s = left.outflow_open;
    b.aortic_close_s = left.outflow_close;
    b.mitral_open_s = left.inflow_open;
    b.tricuspid_close_s = right.inflow_close;
    b.pulmonic_open_s = right.outflow_open;
    b.pulmonic_close_s = right.outflow_close;
    b.tricuspid_open_s = right.inflow_open;
    for (auto& e : transitions)
      if (e.time_s >= lo && e.time_s < hi) e.beat = b.beat;

    const auto index = [&](double t) {
      return static_cast<std::size_t>(std::clamp(std::round((t - series.t0_s) * series.rate_hz), 0.0,
                                                 static_cast<double>(series.size() - 1)));
    };
    const Window w{index(q_s[n]), std::max(index(q_s[n + 1]), index(q_s[n]) + 2)};
    const double lv_onset = activation.pulses[kLv][n].onset_s;
    const double rv_onset = activation.pulses[kRv][n].onset_s;
    b.lv_edv_ml = std::isnan(b.mitral_close_s) ? max_of(series.v_lv, w) : series_value_at(series, series.v_lv, b.mitral_close_s);
    b.lv_esv_ml = std::isnan(b.aortic_close_s) ? min_of(series.v_lv, w) : series_value_at(series, series.v_lv, b.aortic_close_s);
    b.rv_edv_ml = std::isnan(b.tricuspid_close_s) ? max_of(series.v_rv, w) : series_value_at(series, series.v_rv, b.tricuspid_close_s);
    b.rv_esv_ml = std::isnan(b.pulmonic_close_s) ? min_of(series.v_rv, w) : series_value_at(series, series.v_rv, b.pulmonic_close_s);
    b.lv_stroke_volume_ml = integral_of(series.q_aortic, w, series.rate_hz);
    b.rv_stroke_volume_ml = integral_of(series.q_pulmonic, w, series.rate_hz);
    b.lv_ejection_fraction = (b.lv_edv_ml - b.lv_esv_ml) / b.lv_edv_ml;
    b.rv_ejection_fraction = (b.rv_edv_ml - b.rv_esv_ml) / b.rv_edv_ml;
    b.lv_dpdt_max_mmhg_s = max_derivative(series.p_lv, w, series.rate_hz);
    b.rv_dpdt_max_mmhg_s = max_derivative(series.p_rv, w, series.rate_hz);
    b.aortic_systolic_mmhg = max_of(series.p_ao, w);
    b.aortic_diastolic_mmhg = min_of(series.p_ao, w);
    b.pa_systolic_mmhg = max_of(series.p_pa, w);
    b.pa_diastolic_mmhg = min_of(series.p_pa, w);
    b.pa_mean_mmhg = mean_of(series.p_pa, w);
    b.rv_systolic_mmhg = max_of(series.p_rv, w);
    b.lv_edp_mmhg = series_value_at(series, series.p_lv, lv_onset);
    b.rv_edp_mmhg = series_value_at(series, series.p_rv, rv_onset);
    b.la_mean_mmhg = mean_of(series.p_la, w);
    b.ra_mean_mmhg = mean_of(series.p_ra, w);
    b.cardiac_output_l_min = b.lv_stroke_volume_ml * 60.0 / rr / 1000.0;
    beats.push_back(b);
  }
  for (auto& e : transitions)
    if (first_plan_beat < q_s.size() && e.time_s < q_s[first_plan_beat] - 0.5 * timing.pr_interval_s) e.beat = -1;
  return beats;
}

}  // namespace stethogen::gen
