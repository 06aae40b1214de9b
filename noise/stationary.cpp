// Stationary processes: sensor self-noise, ambient room noise, powerline hum, recordings.
#include <algorithm>
#include <cmath>
#include <cstdint>
#include <numeric>

#include <fmt/format.h>

#include "noise/processes.hpp"
#include "noise/recording.hpp"
#include "noise/spectral.hpp"
#include "generator/transmission/portable_extra.hpp"

namespace stethogen::noise {

SiteArray<float> ProcessContext::array_to_overwrite() const {
  if (spare.empty()) return SiteArray<float>(sites.size(), n_samples);
  SiteArray<float> a = std::move(spare.back());
  spare.pop_back();
  return a;
}

RandomStream ProcessContext::shared_stream(ProcessKind kind, std::uint32_t kind_offset) const {
  std::uint32_t k = static_cast<std::uint32_t>(kind) + kind_offset;
  return RandomStream(seed, record_index, stream_id(Stream::noise_base, 16 * k));
}

RandomStream ProcessContext::site_stream(ProcessKind kind, std::size_t site_index, std::uint32_t kind_offset) const {
  std::uint32_t k = static_cast<std::uint32_t>(kind) + kind_offset;
  auto site = static_cast<std::uint32_t>(sites.at(site_index));
  return RandomStream(seed, record_index, stream_id(Stream::noise_base, 16 * k + 1 + site));
}

RandomStream ProcessContext::local_stream(ProcessKind kind) const {
  return RandomStream(seed, record_index, stream_id(Stream::noise_base, 16 * static_cast<std::uint32_t>(kind) + 15));
}

namespace {

// row[i] = g * envelope[i] * (w_shared * shared[i] + w_local * local[i]) over [0, count).
void mix_row(float* row, const float* shared, float w_shared, const float* local, float w_local, float g,
             const float* envelope, std::size_t count) {
  if (envelope) {
    for (std::size_t i = 0; i < count; ++i) row[i] = g * envelope[i] * (w_shared * shared[i] + w_local * local[i]);
  } else {
    for (std::size_t i = 0; i < count; ++i) row[i] = g * (w_shared * shared[i] + w_local * local[i]);
  }
}

}  // namespace

double spread_over_sites(const ProcessContext& ctx, ProcessKind kind, double coherence, double spread_db,
                         const std::vector<float>& response, const float* envelope, SiteArray<float>& out) {
  const std::size_t n = ctx.n_samples;
  RandomStream shared_rng = ctx.shared_stream(kind), local_rng = ctx.local_stream(kind);
  ShapedNoise shared, local;
  if (coherence > 0) shared = shaped_gaussian(shared_rng, response, n);
  if (coherence < 1) local = shaped_gaussian(local_rng, response, n);
  // Each part at unit power; a part that is not made is read with weight zero in place of the other.
  auto weight = [](const ShapedNoise& part, double fraction) {
    return part.samples && part.mean_power > 0 ? static_cast<float>(std::sqrt(fraction / part.mean_power)) : 0.0f;
  };
  const float w_shared = weight(shared, coherence), w_local = weight(local, 1.0 - coherence);
  const float* shared_x = shared.samples ? shared.samples.get() : local.samples.get();
  const float* local_x = local.samples ? local.samples.get() : shared.samples.get();
  double power = 0;
  for (std::size_t s = 0; s < ctx.sites.size(); ++s) {
    RandomStream rng = ctx.site_stream(kind, s);
    const float g = static_cast<float>(portable::pow(10.0, rng.uniform(-spread_db, spread_db) / 20.0));
    const std::size_t lag = (1 + static_cast<std::size_t>(ctx.sites[s])) * n / (kAllSites.size() + 1);
    float* row = out.row(s);
    // The local part read from lag on, wrapping once: two runs without a branch per sample.
    const std::size_t first = n - lag;
    mix_row(row, shared_x, w_shared, local_x + lag, w_local, g, envelope, first);
    mix_row(row + first, shared_x + first, w_shared, local_x, w_local, g, envelope ? envelope + first : nullptr, lag);
    power += rough_mean_power(row, n) / static_cast<double>(ctx.sites.size());  // while the row is in cache
  }
  return power;
}

namespace {

// Per-site level spread of the processes that reach all sites (room noise, hum, recordings):
// the sensors sit a few centimetres apart, so they hear nearly the same level.
constexpr double kSiteSpreadDb = 1.0;

double site_gain(RandomStream& rng) { return portable::pow(10.0, rng.uniform(-kSiteSpreadDb, kSiteSpreadDb) / 20.0); }

// sin(phase0 + k step) for k = 0, 1, 2, ...: the phasor exp(i (phase0 + k step)) rotated once
// per call, recomputed from cos and sin every kResync calls so that rounding does not accumulate.
class SineSteps {
 public:
  SineSteps(double step_rad, double phase0_rad)
      : step_(step_rad), phase0_(phase0_rad), rot_re_(portable::cos(step_rad)), rot_im_(portable::sin(step_rad)) {}
  double next() {
    if (k_ % kResync == 0) {
      double phase = std::fmod(phase0_ + step_ * static_cast<double>(k_), 2 * M_PI);
      re_ = portable::cos(phase);
      im_ = portable::sin(phase);
    }
    const double re = re_, im = im_;
    re_ = re * rot_re_ - im * rot_im_;
    im_ = re * rot_im_ + im * rot_re_;
    ++k_;
    return im;
  }

 private:
  static constexpr std::size_t kResync = 128;
  double step_, phase0_, rot_re_, rot_im_;
  double re_ = 1, im_ = 0;
  std::size_t k_ = 0;
};

}  // namespace

Contribution sensor_noise(const ProcessContext& ctx) {
  Contribution c{"sensor_white", true, ctx.array_to_overwrite(), {}};
  c.mean_power = 0;
  for (std::size_t s = 0; s < ctx.sites.size(); ++s) {
    RandomStream rng = ctx.site_stream(ProcessKind::sensor_white, s);
    fill_gaussian(rng, c.samples.row(s), ctx.n_samples);
    c.mean_power += rough_mean_power(c.samples.row(s), ctx.n_samples) / static_cast<double>(ctx.sites.size());
  }
  return c;
}

Contribution ambient_noise(const ProcessContext& ctx, const AmbientNoise& cfg) {
  Contribution c{"ambient_" + std::string(name(cfg.color)), true, ctx.array_to_overwrite(), {}};
  const double corner = cfg.low_corner_hz;
  std::function<double(double)> amplitude;
  std::string shape = "ambient " + std::string(name(cfg.color));
  switch (cfg.color) {
    case NoiseColor::white: amplitude = [](double) { return 1.0; }; break;
    // Power 1/f (-3 dB/octave), flat below the corner.
    case NoiseColor::pink:
      amplitude = [corner](double f) { return 1.0 / std::sqrt(std::max(f, corner)); };
      shape += fmt::format(" {}", corner);
      break;
    // Power 1/f^2 (-6 dB/octave), flat below the corner.
    case NoiseColor::brown:
      amplitude = [corner](double f) { return 1.0 / std::max(f, corner); };
      shape += fmt::format(" {}", corner);
      break;
    case NoiseColor::band: {
      Range band = cfg.band_hz;
      amplitude = [band](double f) { return f >= band.lo && f <= band.hi ? 1.0 : 0.0; };
      shape += fmt::format(" {} {}", band.lo, band.hi);
      break;
    }
  }
  auto response = cached_response(shape, ctx.n_samples, ctx.sample_rate_hz, amplitude);
  // One room: a shared component heard at every site plus a smaller local part per site.
  c.mean_power =
      spread_over_sites(ctx, ProcessKind::ambient, cfg.site_coherence, kSiteSpreadDb, *response, nullptr, c.samples);
  return c;
}

Contribution hum_noise(const ProcessContext& ctx, const HumNoise& cfg) {
  Contribution c{"hum_" + std::to_string(static_cast<int>(cfg.frequency_hz)) + "hz", true, ctx.array_to_overwrite(),
                 {}};
  const std::size_t n = ctx.n_samples, n_sites = ctx.sites.size();
  const int n_harmonics = cfg.harmonics + 1;
  RandomStream rng = ctx.shared_stream(ProcessKind::hum);
  std::vector<double> harmonic_phase(n_harmonics);
  for (double& p : harmonic_phase) p = rng.uniform(0, 2 * M_PI);
  // Slow level drift: three incommensurate sinusoids around 1/drift_period_s, |D| <= 1.
  double drift_f[3], drift_phase[3];
  for (int j = 0; j < 3; ++j) {
    drift_f[j] = rng.uniform(0.5, 1.5) / cfg.drift_period_s;
    drift_phase[j] = rng.uniform(0, 2 * M_PI);
  }
  // Mains and sample rate are whole numbers of hertz (the parser allows 50 or 60 Hz), so the
  // hum without its drift repeats exactly every fs / gcd(fs, f0) samples: one period per site
  // is computed, with exact argument reduction (h f0 k mod fs), and repeated.
  const auto fs = static_cast<std::int64_t>(std::lround(ctx.sample_rate_hz));
  const auto f0 = static_cast<std::int64_t>(std::lround(cfg.frequency_hz));
  const auto period = static_cast<std::size_t>(fs / std::gcd(fs, f0));
  // Per site: a small level and phase difference (wiring and electrode geometry).
  std::vector<std::vector<float>> wave(n_sites, std::vector<float>(period));
  for (std::size_t s = 0; s < n_sites; ++s) {
    RandomStream site_rng = ctx.site_stream(ProcessKind::hum, s);
    double g = site_gain(site_rng);
    double delta = site_rng.uniform(-0.1, 0.1);
    for (int h = 1; h <= n_harmonics; ++h) {
      const double a = g * portable::pow(10.0, cfg.harmonic_step_db * (h - 1) / 20.0);
      const double phase = harmonic_phase[h - 1] + h * delta;
      for (std::size_t k = 0; k < period; ++k) {
        const auto cycles = static_cast<double>((h * f0 * static_cast<std::int64_t>(k)) % fs) / static_cast<double>(fs);
        wave[s][k] += static_cast<float>(a * portable::sin(2 * M_PI * cycles + phase));
      }
    }
  }

  // The drift is far slower than the sample rate: evaluated every kDriftStep samples and
  // interpolated linearly.
  constexpr std::size_t kDriftStep = 32;
  std::vector<SineSteps> drift;
  for (int j = 0; j < 3; ++j)
    drift.emplace_back(2 * M_PI * drift_f[j] * kDriftStep / ctx.sample_rate_hz, drift_phase[j]);
  auto next_drift = [&] {
    double d = 0;
    for (SineSteps& p : drift) d += p.next();
    return d / 3.0;
  };
  std::vector<float> envelope(n);
  double drift_lo = next_drift();
  for (std::size_t i0 = 0; i0 < n; i0 += kDriftStep) {
    const double drift_hi = next_drift();
    for (std::size_t k = 0; k < kDriftStep && i0 + k < n; ++k) {
      const double d = drift_lo + (drift_hi - drift_lo) * static_cast<double>(k) / kDriftStep;
      envelope[i0 + k] = static_cast<float>(1.0 + cfg.drift * d);
    }
    drift_lo = drift_hi;
  }
  c.mean_power = 0;
  for (std::size_t s = 0; s < n_sites; ++s) {
    float* row = c.samples.row(s);
    const float* w = wave[s].data();
    for (std::size_t i0 = 0; i0 < n; i0 += period) {
      const std::size_t count = std::min(period, n - i0);
      for (std::size_t k = 0; k < count; ++k) row[i0 + k] = envelope[i0 + k] * w[k];
    }
    c.mean_power += rough_mean_power(row, n) / static_cast<double>(n_sites);  // while the row is in cache
  }
  return c;
}

Contribution recording_noise(const ProcessContext& ctx, const RecordingNoise& cfg, std::size_t index) {
  Contribution c{"recording:" + cfg.file, true, ctx.array_to_overwrite(), {}};
  auto audio = resampled(*cfg.audio, static_cast<int>(ctx.sample_rate_hz));
  const std::size_t len = audio->size();
  const auto offset_kind = static_cast<std::uint32_t>(index);
  RandomStream rng = ctx.shared_stream(ProcessKind::recording_first, offset_kind);
  // Looped: any start; played once: a start that keeps the recording under the record if it can.
  const std::size_t span = cfg.loop ? len : (len > ctx.n_samples ? len - ctx.n_samples + 1 : 1);
  const std::size_t offset =
      cfg.random_offset ? std::min(static_cast<std::size_t>(rng.uniform() * span), span - 1) : 0;
  for (std::size_t s = 0; s < ctx.sites.size(); ++s) {
    RandomStream site_rng = ctx.site_stream(ProcessKind::recording_first, s, offset_kind);
    const float g = static_cast<float>(site_gain(site_rng));
    float* row = c.samples.row(s);
    for (std::size_t i = 0; i < ctx.n_samples; ++i) {
      std::size_t j = offset + i;
      if (cfg.loop) j %= len;
      row[i] = j < len ? g * (*audio)[j] : 0.0f;
    }
  }
  return c;
}

}  // namespace stethogen::noise
