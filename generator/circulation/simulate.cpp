#include "generator/circulation/simulate.hpp"

#include <algorithm>
#include <array>
#include <cmath>

#include "core/portable_math.hpp"
#include <vector>

#include <fmt/format.h>

#include "generator/circulation/beat_analysis.hpp"

namespace stethogen::gen {

namespace {

std::string describe(const SubjectSpec& s, const EngineSetup& e) {
  return fmt::format("state {}, exercise_intensity {}, severity {}, heart rate {:.1f} bpm, blood volume {} mL, "
                     "lv Ees {:.3f} mmHg/mL, rv Ees {:.3f} mmHg/mL, SVR {:.3f} mmHg s/mL",
                     name(s.state), s.exercise_intensity, s.severity, e.rhythm.heart_rate_bpm,
                     e.circulation.blood_volume_ml, e.circulation.lv.ees_mmhg_per_ml, e.circulation.rv.ees_mmhg_per_ml,
                     e.circulation.systemic_resistance_mmhg_s_per_ml);
}

// The run-in's volumes approach the periodic state geometrically, one slow mode (blood moving
// between the systemic veins and the rest) shrinking by a ratio rho per beat (about 0.77 at
// rest). Once two successive ratios agree, the volumes jump to the limit of that sequence,
// x + rho / (1 - rho) dx: Aitken's delta-squared process (Aitken 1926, Proc R Soc Edinb 46:289)
// with rho = <dx_k, dx_k-1> / |dx_k-1|^2. The jump conserves the blood volume (the per-beat
// changes sum to zero), leaves flows and leaflets to follow within the next beat, and is
// skipped where the ratio is not steady or would leave a volume negative.
struct RunInExtrapolation {
  using Volumes = std::array<double, kVpv + 1>;
  Volumes change{}, previous_change{};
  double previous_ratio = NAN;
  int changes = 0, jumps = 0;

  // x: the state at this beat's Q, previous: at the last one. True if x was moved.
  bool apply(CirculationState& x, const CirculationState& previous) {
    for (int i = kVla; i <= kVpv; ++i) change[i] = x[i] - previous[i];
    double dot = 0, norm = 0;
    for (int i = kVla; i <= kVpv; ++i) {
      dot += change[i] * previous_change[i];
      norm += previous_change[i] * previous_change[i];
    }
    const double ratio = changes >= 1 && norm > 0 ? dot / norm : NAN;
    const double last_ratio = previous_ratio;
    previous_ratio = ratio;
    previous_change = change;
    ++changes;
    if (jumps >= kMaxJumps || !(ratio > 0.0 && ratio < kMaxRatio && std::fabs(ratio - last_ratio) < kRatioAgreement))
      return false;
    const double gain = ratio / (1.0 - ratio);
    CirculationState moved = x;
    for (int i = kVla; i <= kVpv; ++i) {
      moved[i] += gain * change[i];
      if (!(moved[i] > 0.0)) return false;
    }
    x = moved;
    ++jumps;
    changes = 0;  // the next ratio needs two changes from the new start
    previous_ratio = NAN;
    return true;
  }

  static constexpr int kMaxJumps = 2;
  static constexpr double kMaxRatio = 0.95, kRatioAgreement = 0.01;
};

// Run-in at the nominal rate with pleural pressure held at end-expiration (where the recorded
// breathing starts), until beat-to-beat change is negligible. Returns the state at a Q instant.
CirculationState run_in(const EngineSetup& e, const SubjectSpec& subject, const IntegratorSettings& settings,
                        const std::string& context, int& beats_used, std::uint64_t& steps, std::uint64_t& rhs) {
  const double rr = 60.0 / e.rhythm.heart_rate_bpm;
  std::vector<double> q(kMaxRunInBeats + 2);
  for (std::size_t k = 0; k < q.size(); ++k) q[k] = rr * static_cast<double>(k);
  const ActivationPlan plan = make_activation_plan(q, e.circulation.timing, e.rhythm.pr_interval_s, e.rhythm.lv_rv_delay_s);
  const Respiration still = Respiration::apnoea(e.circulation.thorax_end_expiratory_mmhg);
  const CirculationModel model(e.circulation, &plan, &still);
  // Start just after the first Q so the first atrial pulse is not cut.
  Integrator integ(model, initial_state(e.circulation), q[1], settings, subject.record_id, context);
  CirculationState x, previous = integ.state();
  RunInExtrapolation extrapolation;
  int settled_beats = 0;
  for (int k = 2; k < static_cast<int>(q.size()); ++k) {
    integ.advance_to(q[k], [](double, double) {});
    integ.state_at(q[k], x);
    const bool settled = std::fabs(x[kVlv] - previous[kVlv]) < kRunInToleranceMl &&
                         std::fabs(x[kVrv] - previous[kVrv]) < kRunInToleranceMl && k > 3;
    // After a jump the change of one beat can be small by chance (the slow mode and the
    // flows' transient cancelling); two settled beats in a row are asked for then.
    settled_beats = settled ? settled_beats + 1 : 0;
    if (settled_beats >= (extrapolation.jumps > 0 ? 2 : 1)) {
      beats_used = k - 1;
      steps += integ.steps();
      rhs += model.rhs_evaluations();
      return x;
    }
    // The first beats' changes mix faster modes in.
    if (k > 5 && extrapolation.apply(x, previous)) integ.restart(x, q[k]);
    previous = x;
  }
  integ.fail(fmt::format("run-in did not settle within {} beats (volume change >= {} mL per beat)", kMaxRunInBeats,
                         kRunInToleranceMl));
}

std::array<std::vector<double>*, 20> series_columns(HemodynamicSeries& s) {
  return {&s.p_lv, &s.p_rv, &s.p_la, &s.p_ra, &s.p_ao, &s.p_pa, &s.p_thorax, &s.v_lv, &s.v_rv, &s.v_la,
          &s.v_ra, &s.q_mitral, &s.q_tricuspid, &s.q_aortic, &s.q_pulmonic, &s.leaflet_mitral,
          &s.leaflet_tricuspid, &s.leaflet_aortic, &s.leaflet_pulmonic, &s.resp_phase};
}

// Samples gathered column by column and appended to the series a block at a time: twenty
// push_backs per sample (a capacity check and an end-pointer update each) cost more.
class SeriesBlock {
 public:
  void add(const CirculationState& x, const ModelOutputs& o, double phase) {
    // The order of series_columns.
    const double row[kColumns] = {o.p_lv,  o.p_rv,  o.p_la,  o.p_ra,  o.p_ao,  o.p_pa,  o.p_thorax,
                                  x[kVlv], x[kVrv], x[kVla], x[kVra], x[kQmi], x[kQtr], x[kQao],
                                  x[kQpu], x[kZmi], x[kZtr], x[kZao], x[kZpu], phase};
    for (int c = 0; c < kColumns; ++c) values_[c][rows_] = row[c];
    ++rows_;
  }
  bool full() const { return rows_ == kRows; }
  void flush_into(HemodynamicSeries& s) {
    const auto columns = series_columns(s);
    for (int c = 0; c < kColumns; ++c) columns[c]->insert(columns[c]->end(), values_[c], values_[c] + rows_);
    rows_ = 0;
  }

 private:
  static constexpr int kColumns = 20, kRows = 256;
  double values_[kColumns][kRows];
  int rows_ = 0;
};

constexpr Valve kValves[4] = {Valve::mitral, Valve::tricuspid, Valve::aortic, Valve::pulmonic};
constexpr int kLeaflet[4] = {kZmi, kZtr, kZao, kZpu};

}  // namespace

EngineRun run_engine(const SubjectSpec& subject, const IntegratorSettings& settings) {
  EngineRun run;
  run.setup = map_subject_to_engine(subject);
  const EngineSetup& e = run.setup;
  check_circulation_params(e.circulation);
  check_rhythm_params(e.rhythm);
  const std::string context = describe(subject, e);

  CirculationResult& r = run.result;
  r.duration_s = subject.params.duration_s;
  r.inspiration_fraction = e.rhythm.inspiration_fraction;
  const double rr0 = 60.0 / e.rhythm.heart_rate_bpm;
  // RR never exceeds rr0 (1 + rsa + lf) <= 1.4 rr0, so this margin always holds a full cycle.
  const double margin_s = rr0 * (1.0 + e.rhythm.rsa_fraction + e.rhythm.lf_fraction) + 0.25;
  const double series_begin = -margin_s, series_end = r.duration_s + margin_s;
  // One breath with the recorded breathing and HRV lets the respiratory pattern settle first.
  const double breath_s = 60.0 / e.rhythm.respiration_rate_per_min;
  const double beats_in_warmup = std::ceil(breath_s / rr0);
  run.recording_start_s = series_begin - beats_in_warmup * rr0;
  // The plan starts one nominal beat earlier so the handed-over pulses are all present.
  run.rhythm = make_rhythm(e.rhythm, e.circulation.thorax_end_expiratory_mmhg, subject.dataset_seed,
                           subject.record_index, run.recording_start_s - rr0, run.recording_start_s,
                           series_end + 2.0 * rr0, 2);
  run.activation = make_activation_plan(run.rhythm.lv_activation_s, e.circulation.timing, e.rhythm.pr_interval_s,
                                        e.rhythm.lv_rv_delay_s);

  run.recording_start_state = run_in(e, subject, settings, context, run.run_in_beats, r.ode_steps, r.rhs_evaluations);

  run.steady_lv_volume_ml = run.recording_start_state[kVlv];
  run.steady_rv_volume_ml = run.recording_start_state[kVrv];
  const CirculationModel model(e.circulation, &run.activation, &run.rhythm.respiration);
  Integrator integ(model, run.recording_start_state, run.recording_start_s, settings, subject.record_id, context);
  HemodynamicSeries& s = r.series;
  s.rate_hz = kSeriesRateHz;
  s.t0_s = series_begin;
  const std::size_t n_samples = static_cast<std::size_t>(std::floor((series_end - series_begin) * kSeriesRateHz)) + 1;
  for (std::vector<double>* column : series_columns(s)) column->reserve(n_samples);
  SeriesBlock block;
  std::size_t samples_taken = 0;
  CirculationState previous = integ.state(), x;
  ModelOutputs o;
  // Beats whose contraction is still ahead get their preload-dependent durations once the
  // integration passes their trigger: Q, or earlier if a ventricle contracts before Q.
  const double lv_exponent = e.circulation.timing.lv_preload_duration_exponent;
  const double rv_exponent = e.circulation.timing.rv_preload_duration_exponent;
  std::size_t next_adapt = 0, breath_hint = 0;
  double lv_factor = 1.0, rv_factor = 1.0;
  double lv_mean = run.steady_lv_volume_ml, rv_mean = run.steady_rv_volume_ml;
  const auto trigger = [&](std::size_t n) {
    const double first_onset = std::min(run.activation.pulses[kLv][n].onset_s, run.activation.pulses[kRv][n].onset_s);
    return std::min(run.rhythm.lv_activation_s[n], first_onset - 2.0 * settings.max_step_s);
  };
  while (next_adapt < run.rhythm.lv_activation_s.size() &&
         (next_adapt == 0 || trigger(next_adapt) <= run.recording_start_s))
    ++next_adapt;
  integ.advance_to(series_end, [&](double t_prev, double t_now) {
    const CirculationState& now = integ.state();
    while (next_adapt < run.rhythm.lv_activation_s.size() && trigger(next_adapt) <= t_now) {
      integ.state_at(trigger(next_adapt), x);
      // 70 % of the new preload effect, 30 % of the previous beat's: this damps the period-2
      // feedback (longer contraction -> shorter filling) that short diastoles would otherwise show.
      // The coupling fades out below RR 0.75 s and is gone at 0.45 s, where short diastoles make
      // the loop gain exceed one (beat-to-beat alternation) whatever the damping.
      const double rr = run.rhythm.lv_activation_s[next_adapt] - run.rhythm.lv_activation_s[next_adapt - 1];
      const double fade = std::clamp((rr - 0.45) / 0.30, 0.0, 1.0);
      // The reference volume is a running mean over about one breath, so only beat-to-beat
      // changes act (breathing also shifts the mean volumes away from the run-in values).
      const double weight = std::clamp(rr / breath_s, 0.05, 1.0);
      const auto factor = [&](double v, double k, double& v_mean, double& previous) {
        previous = 0.3 * previous + 0.7 * std::clamp(portable::pow(v / v_mean, k), 0.85, 1.2);
        v_mean += weight * (v - v_mean);
        return previous;
      };
      stretch_pulse(run.activation.pulses[kLv][next_adapt], factor(x[kVlv], fade * lv_exponent, lv_mean, lv_factor));
      stretch_pulse(run.activation.pulses[kRv][next_adapt], factor(x[kVrv], fade * rv_exponent, rv_mean, rv_factor));
      ++next_adapt;
    }
    for (int i = 0; i < 4; ++i) {
      const double g0 = previous[kLeaflet[i]] - kLeafletOpenThreshold, g1 = now[kLeaflet[i]] - kLeafletOpenThreshold;
      if ((g0 > 0) == (g1 > 0) || t_now < series_begin) continue;
      // Bisection on the dense output (the crossing is monotone inside one step).
      double a = t_prev, b = t_now;
      while (b - a > 1e-8) {
        const double m = 0.5 * (a + b);
        if ((integ.component_at(m, kLeaflet[i]) - kLeafletOpenThreshold > 0) == (g0 > 0)) a = m; else b = m;
      }
      const double t_cross = 0.5 * (a + b);
      if (t_cross >= series_begin && t_cross <= series_end)
        r.transitions.push_back({kValves[i], g1 > 0, t_cross, 0});
    }
    previous = now;
    if (t_prev < series_begin && series_begin <= t_now) integ.state_at(series_begin, run.series_start_state);
    for (; samples_taken < n_samples; ++samples_taken) {
      const double t = s.time_at(samples_taken);
      if (t > t_now) break;
      integ.state_at(t, x);
      model.outputs(x, t, o);
      block.add(x, o, run.rhythm.respiration.phase(t, breath_hint));
      if (block.full()) block.flush_into(s);
    }
  });
  block.flush_into(s);
  std::sort(r.transitions.begin(), r.transitions.end(),
            [](const ValveTransition& a, const ValveTransition& b) { return a.time_s < b.time_s; });
  r.ode_steps += integ.steps();
  r.rhs_evaluations += model.rhs_evaluations();
  r.beats = analyse_beats(s, run.rhythm.lv_activation_s, run.activation, run.rhythm.respiration,
                          BeatTiming{e.rhythm.pr_interval_s, e.rhythm.lv_rv_delay_s}, r.transitions);
  return run;
}

CirculationResult simulate_circulation(const SubjectSpec& subject) { return std::move(run_engine(subject).result); }

}  // namespace stethogen::gen
