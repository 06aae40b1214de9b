// add_noise: generates the profile's processes, sets their relative levels, scales the sum to
// the record's SNR (definition in docs/noise.md), then applies clipping motion and dropouts.
#include "noise/mix.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <stdexcept>

#include "core/error.hpp"
#include "noise/processes.hpp"
#include "noise/profile.hpp"
#include "noise/spectral.hpp"
#include "generator/transmission/portable_extra.hpp"

namespace stethogen::noise {

namespace {

double db_to_amplitude(double db) { return portable::pow(10.0, db / 20.0); }

// An event of an additive process whose level is known once the SNR scale is.
struct PendingEvent {
  std::string kind;
  Burst burst;
  double unscaled_power = 0;  // over the burst, at the process's relative level
};

// The additive processes summed at their relative levels, each freed once added.
struct Background {
  const ProcessContext& ctx;
  SiteArray<float> total;  // empty until the first process is added
  std::vector<PendingEvent> events;
  std::vector<std::string> stationary;
  bool keep_sensor = false;  // dropouts leave the sensor self-noise: keep it at its level
  SiteArray<float> sensor;
  bool has_sensor = false;

  void add(Contribution c, double level_db) {
    double a = db_to_amplitude(level_db);
    if (c.stationary) {  // brought to unit mean power over all sites and samples
      const double p =
          c.mean_power >= 0 ? c.mean_power : rough_mean_power(c.samples.data.data(), c.samples.data.size());
      a = p > 0 ? a / std::sqrt(p) : 0.0;
      stationary.push_back(c.label);
    }
    const auto gain = static_cast<float>(a);
    for (const Burst& b : c.bursts)
      events.push_back({c.label, b, a * a * mean_power(c.samples.row(b.site) + b.onset, b.offset - b.onset)});
    const bool keep = c.label == "sensor_white" && keep_sensor;
    if (total.data.empty() && !keep) {  // the first process: its own array becomes the sum
      for (float& v : c.samples.data) v *= gain;
      total = std::move(c.samples);
      return;
    }
    if (total.data.empty()) total = SiteArray<float>(c.samples.n_sites, c.samples.n_samples);
    for (std::size_t i = 0; i < c.samples.data.size(); ++i) total.data[i] += gain * c.samples.data[i];
    if (keep) {
      for (float& v : c.samples.data) v *= gain;
      sensor = std::move(c.samples);
      has_sensor = true;
    } else {
      ctx.spare.push_back(std::move(c.samples));
    }
  }
};

Background generate_additive(const ProcessContext& ctx, const NoiseProfile& p, const NoiseInputs& in,
                             const std::function<double(double)>& resp_phase) {
  Background bg{ctx, {}, {}, {}, p.dropout.enabled, {}, false};
  if (p.sensor_white.enabled) bg.add(sensor_noise(ctx), p.sensor_white.level_db);
  if (p.ambient.enabled) bg.add(ambient_noise(ctx, p.ambient), p.ambient.level_db);
  if (p.breath.enabled) bg.add(breath_noise(ctx, p.breath, resp_phase, in.inspiration_fraction), p.breath.level_db);
  if (p.friction.enabled) bg.add(friction_noise(ctx, p.friction), p.friction.level_db);
  if (p.motion.enabled && !p.motion.clip) bg.add(motion_noise(ctx, p.motion), p.motion.level_db);
  if (p.hum.enabled) bg.add(hum_noise(ctx, p.hum), p.hum.level_db);
  for (std::size_t i = 0; i < p.recordings.size(); ++i)
    bg.add(recording_noise(ctx, p.recordings[i], i), p.recordings[i].level_db);
  if (bg.total.data.empty()) bg.total = SiteArray<float>(ctx.sites.size(), ctx.n_samples);
  return bg;
}

// Artifact level: power over the event relative to the mean clean power at that site.
double level_db(const float* x, const Burst& b, double scale, double clean_power) {
  double power = mean_power(x + b.onset, b.offset - b.onset) * scale * scale;
  return 10.0 * portable_extra::log10(power / clean_power);
}

}  // namespace

NoiseOutput add_noise(const NoiseInputs& in) {
  if (!in.subject || !in.clean) throw std::invalid_argument("add_noise: subject and clean signal are required");
  const SubjectSpec& subject = *in.subject;
  const SiteArray<float>& clean = *in.clean;
  NoiseOutput out;
  out.snr_target_db = std::numeric_limits<double>::quiet_NaN();
  out.snr_achieved_db = std::numeric_limits<double>::quiet_NaN();
  if (!subject.noise_profile || !subject.params.snr_db) {
    out.noisy = clean;
    return out;
  }
  if (clean.n_sites != subject.sites.size())
    throw std::invalid_argument("add_noise: clean signal rows do not match the subject's sites");
  const NoiseProfile& profile = *subject.noise_profile;
  const double snr_db = *subject.params.snr_db;
  out.snr_target_db = snr_db;
  validate_for_rate(profile, in.sample_rate_hz, "noise." + subject.noise_profile_name);
  if (clean.n_samples == 0 || clean.n_sites == 0) {
    out.noisy = clean;
    return out;
  }

  ProcessContext ctx{subject.dataset_seed, subject.record_index, static_cast<double>(in.sample_rate_hz),
                     clean.n_samples, subject.sites, {}};
  const std::size_t n = clean.n_samples;
  std::vector<double> site_clean_power(clean.n_sites);
  double clean_power = 0;  // all sites: the rows are of equal length
  for (std::size_t s = 0; s < clean.n_sites; ++s) {
    site_clean_power[s] = mean_power(clean.row(s), n);
    clean_power += site_clean_power[s] / static_cast<double>(clean.n_sites);
  }
  if (!(clean_power > 0) || !std::isfinite(clean_power))
    throw RecordFailure(subject.record_id, "the clean signal is silent or non-finite: the SNR is undefined");
  auto site_reference = [&](std::int32_t site) {
    double p = site_clean_power[static_cast<std::size_t>(site)];
    return p > 0 ? p : clean_power;
  };

  // Without a respiration model: a regular cycle at the subject's respiration rate.
  const double breaths_per_s = subject.params.respiration_rate_per_min / 60.0;
  std::function<double(double)> resp_phase =
      in.resp_phase ? in.resp_phase : [breaths_per_s](double t) { return std::fmod(t * breaths_per_s, 1.0); };

  // The additive background, summed at relative levels, then one scale for the SNR.
  Background bg = generate_additive(ctx, profile, in, resp_phase);
  const double raw_power = mean_power(bg.total.data.data(), bg.total.data.size());
  const double scale = raw_power > 0 ? std::sqrt(clean_power / (raw_power * portable::pow(10.0, snr_db / 10.0))) : 0.0;
  // The noisy signal in place of the sum, and the achieved SNR from its float samples
  // (independent partial sums, so that the loop vectorises).
  out.noisy = std::move(bg.total);
  float* noisy = out.noisy.data.data();
  const float* x = clean.data.data();
  const std::size_t size = out.noisy.data.size();
  auto mix_sample = [&](std::size_t i) {
    noisy[i] = x[i] + static_cast<float>(scale * noisy[i]);
    const double e = static_cast<double>(noisy[i]) - x[i];
    return e * e;
  };
  constexpr std::size_t kLanes = 8;
  double lane[kLanes] = {};
  std::size_t i = 0;
  for (; i + kLanes <= size; i += kLanes)
    for (std::size_t k = 0; k < kLanes; ++k) lane[k] += mix_sample(i + k);
  double noise_energy = 0;
  for (; i < size; ++i) noise_energy += mix_sample(i);
  for (double v : lane) noise_energy += v;
  out.snr_achieved_db = noise_energy > 0
                            ? 10.0 * portable_extra::log10(clean_power * static_cast<double>(size) / noise_energy)
                            : std::numeric_limits<double>::infinity();
  out.stationary = bg.stationary;
  for (const PendingEvent& e : bg.events) {
    const double burst_db =
        10.0 * portable_extra::log10(scale * scale * e.unscaled_power / site_reference(e.burst.site));
    out.artifacts.push_back({e.kind, e.burst.site, e.burst.onset / ctx.sample_rate_hz, e.burst.offset / ctx.sample_rate_hz,
                             burst_db});
  }

  // Motion strong enough to clip: set in sensor full-scale units, outside the SNR budget.
  if (profile.motion.enabled && profile.motion.clip) {
    Contribution motion = motion_noise(ctx, profile.motion);
    const float peak = static_cast<float>(profile.motion.peak_fs);
    for (std::size_t i = 0; i < motion.samples.data.size(); ++i) out.noisy.data[i] += peak * motion.samples.data[i];
    for (const Burst& b : motion.bursts)
      out.artifacts.push_back({motion.label, b.site, b.onset / ctx.sample_rate_hz, b.offset / ctx.sample_rate_hz,
                               level_db(motion.samples.row(b.site), b, profile.motion.peak_fs, site_reference(b.site))});
  }

  // Contact loss: the signal and every noise but the sensor's own fall to depth_db.
  if (profile.dropout.enabled) {
    std::vector<Burst> intervals = dropout_intervals(ctx, profile.dropout);
    SiteArray<float> gain = dropout_gain(ctx, profile.dropout, intervals);
    for (std::size_t i = 0; i < gain.data.size(); ++i) {
      if (gain.data[i] == 1.0f) continue;
      float floor = bg.has_sensor ? static_cast<float>(scale * bg.sensor.data[i]) : 0.0f;
      out.noisy.data[i] = gain.data[i] * (out.noisy.data[i] - floor) + floor;
    }
    for (const Burst& b : intervals)
      out.artifacts.push_back({"dropout", b.site, b.onset / ctx.sample_rate_hz, b.offset / ctx.sample_rate_hz,
                               profile.dropout.depth_db});
  }

  std::sort(out.artifacts.begin(), out.artifacts.end(), [](const Artifact& a, const Artifact& b) {
    if (a.onset_s != b.onset_s) return a.onset_s < b.onset_s;
    if (a.site != b.site) return a.site < b.site;
    return a.kind < b.kind;
  });
  return out;
}

}  // namespace stethogen::noise
