// A hand-built CirculationResult with piecewise-linear pressures and flows whose slopes and
// levels the tests set, so the source laws can be checked against known inputs.
#pragma once

#include <algorithm>
#include <cmath>
#include <tuple>

#include "generator/hemodynamics.hpp"

namespace stethogen::test {

struct SyntheticBeatShape {
  double lv_rise_mmhg_s = 1500;     // isovolumic LV pressure slope
  double rv_rise_mmhg_s = 400;
  double aortic_close_mmhg = 95;
  double pa_close_mmhg = 18;
  double e_wave_decel_ml_s2 = 6000;  // deceleration of the early inflow
  double a_wave_decel_ml_s2 = 3000;  // deceleration of the atrial inflow
};

inline double ramp(double t, double t0, double t1, double v0, double v1) {
  if (t <= t0) return v0;
  if (t >= t1) return v1;
  return v0 + (v1 - v0) * (t - t0) / (t1 - t0);
}

// Beats at -1, 0, 1, 2 s, record window [0, 2), series rate 2 kHz.
inline gen::CirculationResult synthetic_circulation(const SyntheticBeatShape& shape) {
  gen::CirculationResult r;
  r.duration_s = 2.0;
  auto& s = r.series;
  s.rate_hz = 2000;
  s.t0_s = -1.0;
  const std::size_t n = 4 * 2000;
  for (auto* v : {&s.p_lv, &s.p_rv, &s.p_la, &s.p_ra, &s.p_ao, &s.p_pa, &s.p_thorax, &s.v_lv, &s.v_rv, &s.v_la,
                  &s.v_ra, &s.q_mitral, &s.q_tricuspid, &s.q_aortic, &s.q_pulmonic, &s.leaflet_mitral,
                  &s.leaflet_tricuspid, &s.leaflet_aortic, &s.leaflet_pulmonic, &s.resp_phase})
    v->assign(n, 0.0);
  const double mc = 0.05, tc = 0.07, ac = 0.35, pc = 0.38, mo = 0.43;
  const double lv_open = 80.0, rv_open = 10.0;
  const double ao = mc + (lv_open - 5.0) / shape.lv_rise_mmhg_s;
  const double po = tc + (rv_open - 2.0) / shape.rv_rise_mmhg_s;
  const double e_peak = mo + 0.06, e_amp = 600.0, e_end = e_peak + e_amp / shape.e_wave_decel_ml_s2;
  const double atrial_rise_start = -0.09;
  for (std::size_t k = 0; k < n; ++k) {
    double abs_t = s.time_at(k);
    double q = std::floor(abs_t);   // activation of this cycle
    double t = abs_t - q;
    double lv = 5.0;
    if (t >= mc && t < ao) lv = 5.0 + shape.lv_rise_mmhg_s * (t - mc);
    else if (t >= ao && t < ac) lv = std::min(lv_open + 300.0 * (t - ao), 110.0);
    else if (t >= ac) lv = ramp(t, ac, mo, 90.0, 3.0);
    s.p_lv[k] = lv;
    s.p_la[k] = 4.0;
    s.p_ao[k] = t < ao ? 80.0 : (t < ac ? ramp(t, ao, ac, lv_open, shape.aortic_close_mmhg)
                                        : ramp(t, ac, 1.0, shape.aortic_close_mmhg, 80.0));
    double rv = 2.0;
    if (t >= tc && t < po) rv = 2.0 + shape.rv_rise_mmhg_s * (t - tc);
    else if (t >= po && t < pc) rv = std::min(rv_open + 300.0 * (t - po), 24.0);
    else if (t >= pc) rv = ramp(t, pc, mo, 15.0, 1.0);
    s.p_rv[k] = rv;
    s.p_ra[k] = 1.5;
    s.p_pa[k] = t < po ? rv_open : (t < pc ? ramp(t, po, pc, rv_open, shape.pa_close_mmhg)
                                           : ramp(t, pc, 1.0, shape.pa_close_mmhg, 8.0));
    s.q_mitral[k] = t < mo ? 0.0 : (t < e_peak ? ramp(t, mo, e_peak, 0.0, e_amp) : ramp(t, e_peak, e_end, e_amp, 0.0));
    // The A-wave: rises over 80 ms to its peak 20 ms before activation, then decelerates.
    double tt = t > 0.5 ? t - 1.0 : t;  // time from the next (or this) activation
    const double a_peak = -0.02, a_amp = 200.0, a_end = a_peak + a_amp / shape.a_wave_decel_ml_s2;
    if (tt > atrial_rise_start && tt < a_end)
      s.q_mitral[k] += tt < a_peak ? ramp(tt, atrial_rise_start, a_peak, 0.0, a_amp) : ramp(tt, a_peak, a_end, a_amp, 0.0);
  }
  for (int b = 0; b < 4; ++b) {
    gen::BeatHemodynamics beat;
    beat.beat = b;
    double q = b - 1.0;
    beat.lv_activation_s = q;
    beat.rv_activation_s = q;
    beat.atrial_activation_s = q - 0.16;
    beat.rr_s = 1.0;
    beat.mitral_close_s = q + mc;
    beat.tricuspid_close_s = q + tc;
    beat.aortic_open_s = q + ao;
    beat.pulmonic_open_s = q + po;
    beat.aortic_close_s = q + ac;
    beat.pulmonic_close_s = q + pc;
    beat.mitral_open_s = q + mo;
    beat.tricuspid_open_s = q + mo;
    beat.lv_dpdt_max_mmhg_s = shape.lv_rise_mmhg_s;
    r.beats.push_back(beat);
    for (auto [v, open, t] : {std::tuple{gen::Valve::mitral, false, mc}, {gen::Valve::tricuspid, false, tc},
                              {gen::Valve::aortic, true, ao}, {gen::Valve::pulmonic, true, po},
                              {gen::Valve::aortic, false, ac}, {gen::Valve::pulmonic, false, pc},
                              {gen::Valve::mitral, true, mo}, {gen::Valve::tricuspid, true, mo}})
      r.transitions.push_back({v, open, q + t, b});
  }
  return r;
}

}  // namespace stethogen::test
