// One record end to end (generator/pipeline.hpp): circulation -> sources -> transmission ->
// noise -> sensor output stage -> truth.
#include "generator/pipeline.hpp"

#include <algorithm>
#include <cmath>

#include "core/check.hpp"
#include "core/error.hpp"
#include "generator/circulation/simulate.hpp"
#include "generator/sources/heart_sounds.hpp"
#include "generator/transmission/render.hpp"
#include "generator/transmission/sensor.hpp"
#include "generator/transmission/sites.hpp"
#include "generator/truth/hemodynamic_traces.hpp"
#include "generator/truth/record_truth.hpp"
#include "noise/mix.hpp"

namespace stethogen::gen {
namespace {

constexpr int kMinRateHz = 1000, kMaxRateHz = 48000;

void check_subject(const SubjectSpec& s) {
  check_in_range(s.record_id + ".sample_rate_hz", s.sample_rate_hz, kMinRateHz, kMaxRateHz);
  check_positive(s.record_id + ".duration_s", s.params.duration_s);
  check_positive(s.record_id + ".chest_wall_mm", s.params.chest_wall_mm);
  check_finite(s.record_id + ".sensor_gain_db", s.params.sensor_gain_db);
  check_non_negative(s.record_id + ".source_variation", s.params.source_variation);
  if (s.sites.empty()) throw InputError(s.record_id + ".sites: at least one of " + allowed_sites() + " is required");
}

void check_finite_samples(const SubjectSpec& s, const SiteArray<float>& x, const char* what) {
  if (!all_finite(x.data.data(), x.data.size()))
    throw RecordFailure(s.record_id, std::string("non-finite sample in the ") + what + " signal");
}

RecordSummary summarise(const std::vector<BeatRow>& beats, const CirculationResult& circ) {
  RecordSummary out;
  out.ode_steps = circ.ode_steps;
  out.rhs_evaluations = circ.rhs_evaluations;
  if (beats.empty()) return out;
  double n = static_cast<double>(beats.size()), rr = 0, lv_ef = 0, rv_ef = 0, co = 0;
  for (const BeatRow& b : beats) {
    rr += b.rr_s;
    lv_ef += b.lv_ejection_fraction;
    rv_ef += b.rv_ejection_fraction;
  }
  for (const BeatHemodynamics& b : circ.beats)
    if (b.lv_activation_s >= 0 && b.lv_activation_s < circ.duration_s) co += b.cardiac_output_l_min;
  out.heart_rate_bpm = 60.0 * n / rr;
  out.cardiac_output_l_min = co / n;
  out.lv_ejection_fraction = lv_ef / n;
  out.rv_ejection_fraction = rv_ef / n;
  return out;
}

}  // namespace

Record synthesize_record(const SubjectSpec& subject) {
  check_subject(subject);
  CirculationResult circ = simulate_circulation(subject);

  Record record;
  record.subject = subject;
  record.sample_rate_hz = subject.sample_rate_hz;
  record.sites = subject.sites;
  const auto n_samples = static_cast<std::size_t>(std::ceil(circ.duration_s * subject.sample_rate_hz - 1e-9));

  std::vector<SoundComponent> components = heart_sound_sources(circ, draw_source_variation(subject));
  std::vector<SoundGroup> groups = group_components(components);
  TransmissionPlan plan = plan_transmission(subject);
  Rendering rendering = render_sites(components, groups, plan, n_samples);
  check_finite_samples(subject, rendering.clean, "clean");

  const HemodynamicSeries& series = circ.series;
  noise::NoiseInputs noise_in;
  noise_in.subject = &subject;
  noise_in.sample_rate_hz = subject.sample_rate_hz;
  noise_in.clean = &rendering.clean;
  noise_in.inspiration_fraction = circ.inspiration_fraction;
  noise_in.resp_phase = [&series](double t) {
    // Nearest sample: the phase wraps from 1 to 0, so it is not interpolated.
    double pos = std::round((t - series.t0_s) * series.rate_hz);
    pos = std::clamp(pos, 0.0, static_cast<double>(series.size() - 1));
    return series.resp_phase[static_cast<std::size_t>(pos)];
  };
  noise::NoiseOutput noisy = noise::add_noise(noise_in);
  check_finite_samples(subject, noisy.noisy, "noisy");

  // The same output stage for both signals; only the noisy one's clipping is an artifact.
  record.pcg = std::move(noisy.noisy);
  record.artifacts = std::move(noisy.artifacts);
  std::vector<Artifact> clipped =
      apply_output_stage(record.pcg, subject.params.sensor_gain_db, subject.sample_format, subject.sample_rate_hz);
  record.artifacts.insert(record.artifacts.end(), clipped.begin(), clipped.end());

  Truth truth = build_truth({circ, components, groups, rendering, subject.sample_rate_hz, n_samples});
  record.pcg_clean = std::move(rendering.clean);
  apply_output_stage(record.pcg_clean, subject.params.sensor_gain_db, subject.sample_format,
                     subject.sample_rate_hz);
  record.states = std::move(truth.states);
  record.events = std::move(truth.events);
  record.beats = std::move(truth.beats);
  record.hemodynamics = hemodynamic_traces(circ);
  record.summary = summarise(record.beats, circ);
  record.summary.snr_target_db = noisy.snr_target_db;
  record.summary.snr_achieved_db = noisy.snr_achieved_db;
  record.summary.stationary_noise = std::move(noisy.stationary);
  return record;
}

}  // namespace stethogen::gen
