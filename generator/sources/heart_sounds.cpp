#include "generator/sources/heart_sounds.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>
#include <optional>

#include "core/random.hpp"
#include "generator/sources/series_probe.hpp"
#include "generator/transmission/portable_extra.hpp"

namespace stethogen::gen {
namespace {

const SourceLaw& law_of(EventKind kind) {
  switch (kind) {
    case EventKind::M1: return kLawM1;
    case EventKind::T1: return kLawT1;
    case EventKind::A2: return kLawA2;
    case EventKind::P2: return kLawP2;
    case EventKind::S3: return kLawS3;
    default: return kLawS4;
  }
}

constexpr double kMinLoadMmhg = 1.0;        // keeps the pitch law finite for a near-empty chamber
constexpr double kIsovolumicFallbackS = 0.08;  // if the semilunar opening is missing
constexpr double kRelaxationSearchS = 0.20;     // AV reopening after a semilunar closure
constexpr double kAvGuardS = 0.010;          // look this far before the AV closure for the steepest rise
constexpr double kEarlyFillingSearchS = 0.20;  // E-wave peak within this of the AV opening
constexpr double kDecelerationSearchS = 0.25;  // the E-wave's deceleration ends within this of its peak
constexpr double kDecelerationOnsetFraction = 0.5;  // S3/S4 start where the deceleration reaches this share of its peak
// P-wave onset to the atrial contraction: before it, a rising LV pressure is still passive filling.
constexpr double kAtrialContractionDelayS = 0.06;
// The A-wave may run past the Q wave (the ventricle contracts after its electromechanical delay).
constexpr double kAtrialWaveAfterActivationS = 0.08;
constexpr double kCrossoverSearchS = 0.15;     // ventricle-atrium crossover after activation

bool finite(double t) { return std::isfinite(t); }

// The first instant in [from, limit] where (a - b) rises through zero; NaN if none.
double upward_crossing(const SeriesProbe& probe, const std::vector<double>& a, const std::vector<double>& b,
                       double from_s, double limit_s, double step_s) {
  double previous = probe.difference(a, b, from_s);
  for (double t = from_s + step_s; t <= limit_s; t += step_s) {
    double d = probe.difference(a, b, t);
    if (previous <= 0 && d > 0) return t - step_s * d / (d - previous);
    previous = d;
  }
  return NAN;
}

// M1 or T1: the ventricle's rising pressure arrested by the closed AV valve. The sound starts at
// the leaflets' closure; a valve that closed early in diastole (no closure in this beat) is set
// vibrating when the ventricular pressure rises through the atrial pressure after activation.
std::optional<SoundComponent> av_closure(EventKind kind, const BeatHemodynamics& b, const SeriesProbe& probe,
                                         const HemodynamicSeries& s, const ComponentVariation& v) {
  bool left = kind == EventKind::M1;
  double close = left ? b.mitral_close_s : b.tricuspid_close_s;
  double open = left ? b.aortic_open_s : b.pulmonic_open_s;
  double activation = left ? b.lv_activation_s : b.rv_activation_s;
  const auto& ventricle = left ? s.p_lv : s.p_rv;
  const auto& atrium = left ? s.p_la : s.p_ra;
  if (!finite(close) && finite(activation) && probe.covers(activation)) {
    // Pre-closed valve: the ventricle's pressure rise through the atrial pressure, or, if it is
    // above it already, the instant its rise reaches half its steepest.
    double limit = finite(open) ? open : activation + kCrossoverSearchS;
    close = upward_crossing(probe, ventricle, atrium, activation, limit, 1.0 / s.rate_hz);
    if (!finite(close)) {
      double half = 0.5 * probe.max_rate(ventricle, &atrium, activation, limit).value;
      if (half > 0) close = probe.first_rate_at_least(ventricle, atrium, activation, limit, half);
    }
  }
  if (!finite(close) || !probe.covers(close)) return std::nullopt;
  if (!finite(open) || open <= close) open = close + kIsovolumicFallbackS;
  double drive = probe.max_rate(ventricle, &atrium, close - kAvGuardS, open).value;
  double load = probe.value(ventricle, open);
  return make_component(kind, b.beat, close, std::max(drive, 0.0), load, v);
}

// A2 or P2: the closed semilunar valve taking up the diastolic load, the arterial pressure at
// closure against the relaxed ventricle (its pressure when the AV valve reopens).
std::optional<SoundComponent> semilunar_closure(EventKind kind, const BeatHemodynamics& b,
                                                const SeriesProbe& probe, const HemodynamicSeries& s,
                                                const ComponentVariation& v) {
  bool left = kind == EventKind::A2;
  double close = left ? b.aortic_close_s : b.pulmonic_close_s;
  double relaxed = left ? b.mitral_open_s : b.tricuspid_open_s;
  if (!finite(close) || !probe.covers(close)) return std::nullopt;
  if (!finite(relaxed) || relaxed <= close || relaxed > close + kRelaxationSearchS)
    relaxed = close + kIsovolumicFallbackS;
  const auto& artery = left ? s.p_ao : s.p_pa;
  const auto& ventricle = left ? s.p_lv : s.p_rv;
  double load = probe.value(artery, close);
  double drive = load - probe.value(ventricle, relaxed);
  return make_component(kind, b.beat, close, std::max(drive, 0.0), load, v);
}

// First instant in [from, limit] where the trace falls to zero or below; limit if none.
double first_non_positive(const SeriesProbe& probe, const std::vector<double>& trace, double from_s, double limit_s,
                          double step_s) {
  for (double t = from_s; t <= limit_s; t += step_s)
    if (probe.value(trace, t) <= 0) return t;
  return limit_s;
}

// Where a filling wave's deceleration sets in: the first instant after its peak at which the
// deceleration reaches kDecelerationOnsetFraction of its largest value (the sound of the
// cardiohemic system is forced by the deceleration and starts as it builds up).
double first_deceleration(const SeriesProbe& probe, const std::vector<double>& flow, double peak_s,
                          const SeriesProbe::Extremum& steepest) {
  if (!(steepest.value < 0)) return steepest.time_s;
  double t = probe.first_rate_at_most(flow, peak_s, steepest.time_s, kDecelerationOnsetFraction * steepest.value);
  return finite(t) ? t : steepest.time_s;
}

// S3: the early (rapid) filling wave decelerated by the ventricle, from the E-wave's peak until
// the inflow stops. Loudness follows the peak deceleration; the sound starts as the deceleration
// sets in, when it first reaches half its peak: the S3 follows the E-wave peak shortly (Manson,
// Nudelman, Hagley, Hall & Kovacs 1995, Circulation 92:388) and precedes the peak deceleration
// rate by 70 +- 16 ms (Lavine & Arends 1989, Am J Noninvasive Cardiol, pp. 51-57).
std::optional<SoundComponent> early_filling(const BeatHemodynamics& b, const BeatHemodynamics* next,
                                            const SeriesProbe& probe, const HemodynamicSeries& s,
                                            const ComponentVariation& v) {
  double open = b.mitral_open_s;
  if (!finite(open) || !probe.covers(open)) return std::nullopt;
  double limit = next && finite(next->atrial_activation_s) ? next->atrial_activation_s : open + 0.4;
  double peak_end = std::min(open + kEarlyFillingSearchS, limit);
  if (peak_end <= open) return std::nullopt;
  auto e_peak = probe.max_value(s.q_mitral, open, peak_end);
  double decel_end = first_non_positive(probe, s.q_mitral, e_peak.time_s,
                                        std::min(e_peak.time_s + kDecelerationSearchS, limit), 1.0 / s.rate_hz);
  if (decel_end <= e_peak.time_s) return std::nullopt;
  auto decel = probe.min_rate(s.q_mitral, e_peak.time_s, decel_end);
  double onset = first_deceleration(probe, s.q_mitral, e_peak.time_s, decel);
  return make_component(EventKind::S3, b.beat, onset, std::max(-decel.value, 0.0), probe.value(s.p_lv, decel.time_s),
                        v);
}

// S4: the atrial filling wave decelerated by the ventricle before it contracts, from the
// A-wave's peak until the inflow stops or the valve closes; timed and driven as the S3 (the
// same cardiohemic vibration, forced by the late-diastolic inflow).
std::optional<SoundComponent> atrial_filling(const BeatHemodynamics& b, const SeriesProbe& probe,
                                             const HemodynamicSeries& s, const ComponentVariation& v) {
  double start = b.atrial_activation_s + kAtrialContractionDelayS;
  double end = b.lv_activation_s + kAtrialWaveAfterActivationS;
  if (finite(b.mitral_close_s)) end = std::min(end, b.mitral_close_s);
  if (!finite(start) || !finite(end) || end <= start || !probe.covers(start)) return std::nullopt;
  auto a_peak = probe.max_value(s.q_mitral, start, end);
  double decel_end = first_non_positive(probe, s.q_mitral, a_peak.time_s, end, 1.0 / s.rate_hz);
  if (decel_end <= a_peak.time_s) decel_end = end;
  auto decel = probe.min_rate(s.q_mitral, a_peak.time_s, decel_end);
  double onset = first_deceleration(probe, s.q_mitral, a_peak.time_s, decel);
  return make_component(EventKind::S4, b.beat, onset, std::max(-decel.value, 0.0), probe.value(s.p_lv, decel.time_s),
                        v);
}

double log_normal(RandomStream& rng, double sd) { return portable::exp(sd * rng.normal()); }

}  // namespace

SourceVariation draw_source_variation(const SubjectSpec& subject) {
  RandomStream rng(subject.dataset_seed, subject.record_index, Stream::sources);
  double sd = subject.params.source_variation;
  SourceVariation out;
  for (ComponentVariation& c : out) {
    c.gain = log_normal(rng, sd);
    c.pitch = log_normal(rng, 0.5 * sd);
    c.damping = log_normal(rng, 0.5 * sd);
  }
  return out;
}

SoundComponent make_component(EventKind kind, std::int32_t beat, double start_s, double drive, double load_mmhg,
                              const ComponentVariation& variation) {
  const SourceLaw& law = law_of(kind);
  SoundComponent c;
  c.kind = kind;
  c.beat = beat;
  c.start_s = start_s;
  c.amplitude = law.gain_au * portable::pow(drive / law.drive_ref, law.drive_exponent) * variation.gain;
  double load = std::max(load_mmhg, kMinLoadMmhg);
  c.f_end_hz = law.pitch_ref_hz * portable::pow(load / law.load_ref_mmhg, law.pitch_exponent) * variation.pitch;
  c.f_start_hz = c.f_end_hz * law.chirp_ratio;
  c.tau_s = 1.0 / (2.0 * std::numbers::pi * law.damping_ratio * variation.damping * c.f_end_hz);
  // The frequency falls over about the component's decay (Xu et al. 2000).
  c.chirp_tau_s = 2.0 * c.tau_s;
  return c;
}

std::vector<SoundComponent> heart_sound_sources(const CirculationResult& circulation,
                                                const SourceVariation& variation) {
  const HemodynamicSeries& s = circulation.series;
  SeriesProbe probe(s);
  std::vector<SoundComponent> out;
  out.reserve(circulation.beats.size() * kComponentCount);
  auto keep = [&](std::optional<SoundComponent> c) {
    if (c) out.push_back(*c);
  };
  const auto& var = variation;
  for (std::size_t i = 0; i < circulation.beats.size(); ++i) {
    const BeatHemodynamics& b = circulation.beats[i];
    const BeatHemodynamics* next = i + 1 < circulation.beats.size() ? &circulation.beats[i + 1] : nullptr;
    keep(atrial_filling(b, probe, s, var[component_index(EventKind::S4)]));
    keep(av_closure(EventKind::M1, b, probe, s, var[component_index(EventKind::M1)]));
    keep(av_closure(EventKind::T1, b, probe, s, var[component_index(EventKind::T1)]));
    keep(semilunar_closure(EventKind::A2, b, probe, s, var[component_index(EventKind::A2)]));
    keep(semilunar_closure(EventKind::P2, b, probe, s, var[component_index(EventKind::P2)]));
    keep(early_filling(b, next, probe, s, var[component_index(EventKind::S3)]));
  }
  std::sort(out.begin(), out.end(),
            [](const SoundComponent& a, const SoundComponent& b) { return a.start_s < b.start_s; });
  return out;
}

}  // namespace stethogen::gen
