// Stationary processes: sensor self-noise, ambient room noise, powerline hum, recordings.
#include <algorithm>
#include <cmath>
#include <complex>

#include "noise/processes.hpp"
#include "noise/recording.hpp"
#include "noise/spectral.hpp"

namespace stethogen::noise {

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

void spread_over_sites(const ProcessContext& ctx, ProcessKind kind, double coherence, double spread_db,
                       const std::function<double(double)>& amplitude, const float* envelope,
                       SiteArray<float>& out) {
  const std::size_t n = ctx.n_samples;
  const std::vector<float> none(n, 0.0f);
  RandomStream shared_rng = ctx.shared_stream(kind), local_rng = ctx.local_stream(kind);
  const std::vector<double> response = amplitude_response(n, ctx.sample_rate_hz, amplitude);
  const std::vector<float> shared = coherence > 0 ? shaped_gaussian(shared_rng, response, n) : none;
  const std::vector<float> local = coherence < 1 ? shaped_gaussian(local_rng, response, n) : none;
  const float w_shared = static_cast<float>(std::sqrt(coherence));
  const float w_local = static_cast<float>(std::sqrt(1.0 - coherence));
  for (std::size_t s = 0; s < ctx.sites.size(); ++s) {
    RandomStream rng = ctx.site_stream(kind, s);
    const float g = static_cast<float>(std::pow(10.0, rng.uniform(-spread_db, spread_db) / 20.0));
    const std::size_t lag = (1 + static_cast<std::size_t>(ctx.sites[s])) * n / (kAllSites.size() + 1);
    float* row = out.row(s);
    for (std::size_t i = 0; i < n; ++i) {
      std::size_t j = i + lag < n ? i + lag : i + lag - n;
      float e = envelope ? g * envelope[i] : g;
      row[i] = e * (w_shared * shared[i] + w_local * local[j]);
    }
  }
}

namespace {

// Per-site level spread of the processes that reach all sites (room noise, hum, recordings):
// the sensors sit a few centimetres apart, so they hear nearly the same level.
constexpr double kSiteSpreadDb = 1.0;

double site_gain(RandomStream& rng) { return std::pow(10.0, rng.uniform(-kSiteSpreadDb, kSiteSpreadDb) / 20.0); }

SiteArray<float> make_array(const ProcessContext& ctx) { return SiteArray<float>(ctx.sites.size(), ctx.n_samples); }

}  // namespace

void normalize_to_unit_power(SiteArray<float>& x) {
  double p = mean_power(x.data.data(), x.data.size());
  if (p <= 0) return;
  const float gain = static_cast<float>(1.0 / std::sqrt(p));
  for (float& v : x.data) v *= gain;
}

Contribution sensor_noise(const ProcessContext& ctx) {
  Contribution c{"sensor_white", true, make_array(ctx), {}};
  for (std::size_t s = 0; s < ctx.sites.size(); ++s) {
    RandomStream rng = ctx.site_stream(ProcessKind::sensor_white, s);
    fill_gaussian(rng, c.samples.row(s), ctx.n_samples);
  }
  normalize_to_unit_power(c.samples);
  return c;
}

Contribution ambient_noise(const ProcessContext& ctx, const AmbientNoise& cfg) {
  Contribution c{"ambient_" + std::string(name(cfg.color)), true, make_array(ctx), {}};
  const double corner = cfg.low_corner_hz;
  std::function<double(double)> amplitude;
  switch (cfg.color) {
    case NoiseColor::white: amplitude = [](double) { return 1.0; }; break;
    // Power 1/f (-3 dB/octave), flat below the corner.
    case NoiseColor::pink: amplitude = [corner](double f) { return 1.0 / std::sqrt(std::max(f, corner)); }; break;
    // Power 1/f^2 (-6 dB/octave), flat below the corner.
    case NoiseColor::brown: amplitude = [corner](double f) { return 1.0 / std::max(f, corner); }; break;
    case NoiseColor::band: {
      Range band = cfg.band_hz;
      amplitude = [band](double f) { return f >= band.lo && f <= band.hi ? 1.0 : 0.0; };
      break;
    }
  }
  // One room: a shared component heard at every site plus a smaller local part per site.
  spread_over_sites(ctx, ProcessKind::ambient, cfg.site_coherence, kSiteSpreadDb, amplitude, nullptr, c.samples);
  normalize_to_unit_power(c.samples);
  return c;
}

Contribution hum_noise(const ProcessContext& ctx, const HumNoise& cfg) {
  Contribution c{"hum_" + std::to_string(static_cast<int>(cfg.frequency_hz)) + "hz", true, make_array(ctx), {}};
  const std::size_t n = ctx.n_samples;
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
  // Per site: a small level and phase difference (wiring and electrode geometry).
  std::vector<std::vector<std::complex<double>>> weights(ctx.sites.size());
  for (std::size_t s = 0; s < ctx.sites.size(); ++s) {
    RandomStream site_rng = ctx.site_stream(ProcessKind::hum, s);
    double g = site_gain(site_rng);
    double delta = site_rng.uniform(-0.1, 0.1);
    for (int h = 1; h <= n_harmonics; ++h) {
      double a = g * std::pow(10.0, cfg.harmonic_step_db * (h - 1) / 20.0);
      weights[s].push_back(std::polar(a, harmonic_phase[h - 1] + h * delta));
    }
  }
  // The drift is far slower than the sample rate: evaluate it every kDriftStep samples and
  // interpolate linearly.
  constexpr std::size_t kDriftStep = 32;
  auto drift_exact = [&](std::size_t i) {
    double t = static_cast<double>(i) / ctx.sample_rate_hz, d = 0;
    for (int j = 0; j < 3; ++j) d += std::sin(2 * M_PI * drift_f[j] * t + drift_phase[j]);
    return d / 3.0;
  };
  double drift_lo = 0, drift_hi = 0;
  auto drift_at = [&](std::size_t i) {
    std::size_t k = i % kDriftStep;
    if (k == 0) {
      drift_lo = drift_exact(i);
      drift_hi = drift_exact(i + kDriftStep);
    }
    return drift_lo + (drift_hi - drift_lo) * static_cast<double>(k) / kDriftStep;
  };
  std::vector<float> envelope(n), sin_h(n), cos_h(n);
  for (std::size_t i = 0; i < n; ++i) envelope[i] = static_cast<float>(1.0 + cfg.drift * drift_at(i));
  constexpr std::size_t kResync = 4096;  // exact phasor every block: no accumulated rounding
  for (int h = 1; h <= n_harmonics; ++h) {
    const double w = 2 * M_PI * h * cfg.frequency_hz / ctx.sample_rate_hz;
    const double step_re = std::cos(w), step_im = std::sin(w);
    double re = 1, im = 0;  // the phasor exp(i w k), rotated one sample at a time
    for (std::size_t i = 0; i < n; ++i) {
      if (i % kResync == 0) {
        double phase = std::fmod(w * static_cast<double>(i), 2 * M_PI);
        re = std::cos(phase);
        im = std::sin(phase);
      } else {
        double next_re = re * step_re - im * step_im;
        im = re * step_im + im * step_re;
        re = next_re;
      }
      sin_h[i] = static_cast<float>(im);
      cos_h[i] = static_cast<float>(re);
    }
    // Im(z * a) for the site's complex weight a.
    for (std::size_t s = 0; s < ctx.sites.size(); ++s) {
      const auto re = static_cast<float>(weights[s][h - 1].real()), im = static_cast<float>(weights[s][h - 1].imag());
      float* row = c.samples.row(s);
      for (std::size_t i = 0; i < n; ++i) row[i] += re * sin_h[i] + im * cos_h[i];
    }
  }
  for (std::size_t s = 0; s < ctx.sites.size(); ++s) {
    float* row = c.samples.row(s);
    for (std::size_t i = 0; i < n; ++i) row[i] *= envelope[i];
  }
  normalize_to_unit_power(c.samples);
  return c;
}

Contribution recording_noise(const ProcessContext& ctx, const RecordingNoise& cfg, std::size_t index) {
  Contribution c{"recording:" + cfg.file, true, make_array(ctx), {}};
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
  normalize_to_unit_power(c.samples);
  return c;
}

}  // namespace stethogen::noise
