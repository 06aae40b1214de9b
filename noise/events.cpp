// Non-stationary processes: contact friction bursts, motion transients, contact dropouts.
// Each site has its own stream: events at one sensor are independent of the others.
#include <algorithm>
#include <cmath>

#include "noise/processes.hpp"
#include "noise/spectral.hpp"
#include "generator/transmission/portable_extra.hpp"

namespace stethogen::noise {

namespace {

constexpr double kDropoutRampS = 0.005;  // contact is lost and regained over a few ms

double hann(std::size_t i, std::size_t len) {
  return len < 2 ? 1.0 : 0.5 - 0.5 * portable::cos(2 * M_PI * static_cast<double>(i) / (len - 1));
}

// Scales x[0, len) to unit mean power (or unit peak) over the burst.
void normalize_burst(float* x, std::size_t len, bool to_peak) {
  double ref = 0;
  if (to_peak) {
    for (std::size_t i = 0; i < len; ++i) ref = std::max(ref, static_cast<double>(std::abs(x[i])));
  } else {
    ref = std::sqrt(mean_power(x, len));
  }
  if (ref <= 0) return;
  for (std::size_t i = 0; i < len; ++i) x[i] = static_cast<float>(x[i] / ref);
}

}  // namespace

std::vector<Burst> poisson_bursts(RandomStream& rng, const ProcessContext& ctx, std::int32_t site,
                                  double rate_per_min, Range duration_ms) {
  std::vector<Burst> out;
  if (rate_per_min <= 0) return out;
  const double rate_per_s = rate_per_min / 60.0;
  const double duration_s = ctx.duration_s();
  double t = 0;
  while (true) {
    t += -portable::log(1.0 - rng.uniform()) / rate_per_s;
    if (t >= duration_s) break;
    double length_s = rng.uniform(duration_ms.lo, duration_ms.hi) / 1000.0;
    auto onset = static_cast<std::size_t>(t * ctx.sample_rate_hz);
    auto offset = std::min(ctx.n_samples, static_cast<std::size_t>((t + length_s) * ctx.sample_rate_hz));
    if (offset > onset + 1) out.push_back({site, onset, offset});
  }
  return out;
}

Contribution friction_noise(const ProcessContext& ctx, const FrictionNoise& cfg) {
  Contribution c{"friction", false, SiteArray<float>(ctx.sites.size(), ctx.n_samples), {}};
  std::vector<float> burst;
  for (std::size_t s = 0; s < ctx.sites.size(); ++s) {
    RandomStream rng = ctx.site_stream(ProcessKind::friction, s);
    for (const Burst& b : poisson_bursts(rng, ctx, static_cast<std::int32_t>(s), cfg.rate_per_min, cfg.duration_ms)) {
      // Broadband rubbing: white noise under a Hann envelope.
      const std::size_t len = b.offset - b.onset;
      burst.resize(len);
      fill_gaussian(rng, burst.data(), len);
      for (std::size_t i = 0; i < len; ++i) burst[i] *= static_cast<float>(hann(i, len));
      normalize_burst(burst.data(), len, false);
      float* row = c.samples.row(s) + b.onset;
      for (std::size_t i = 0; i < len; ++i) row[i] += burst[i];
      c.bursts.push_back(b);
    }
  }
  return c;
}

Contribution motion_noise(const ProcessContext& ctx, const MotionNoise& cfg) {
  Contribution c{"motion", false, SiteArray<float>(ctx.sites.size(), ctx.n_samples), {}};
  std::vector<float> burst;
  for (std::size_t s = 0; s < ctx.sites.size(); ++s) {
    RandomStream rng = ctx.site_stream(ProcessKind::motion, s);
    for (const Burst& b : poisson_bursts(rng, ctx, static_cast<std::int32_t>(s), cfg.rate_per_min, cfg.duration_ms)) {
      // A push of the sensor (offset) plus a few low-frequency sways, under a Hann envelope.
      const std::size_t len = b.offset - b.onset;
      double push = rng.uniform(-1, 1);
      double f[3], a[3], phase[3];
      for (int j = 0; j < 3; ++j) {
        f[j] = rng.uniform(0.5, cfg.max_frequency_hz);
        a[j] = rng.uniform(0.3, 1.0);
        phase[j] = rng.uniform(0, 2 * M_PI);
      }
      burst.resize(len);
      for (std::size_t i = 0; i < len; ++i) {
        double t = static_cast<double>(i) / ctx.sample_rate_hz, v = push;
        for (int j = 0; j < 3; ++j) v += a[j] * portable::sin(2 * M_PI * f[j] * t + phase[j]);
        burst[i] = static_cast<float>(hann(i, len) * v);
      }
      normalize_burst(burst.data(), len, cfg.clip);
      float* row = c.samples.row(s) + b.onset;
      for (std::size_t i = 0; i < len; ++i) row[i] += burst[i];
      c.bursts.push_back(b);
    }
  }
  return c;
}

std::vector<Burst> dropout_intervals(const ProcessContext& ctx, const DropoutNoise& cfg) {
  std::vector<Burst> out;
  for (std::size_t s = 0; s < ctx.sites.size(); ++s) {
    RandomStream rng = ctx.site_stream(ProcessKind::dropout, s);
    auto site = poisson_bursts(rng, ctx, static_cast<std::int32_t>(s), cfg.rate_per_min, cfg.duration_ms);
    out.insert(out.end(), site.begin(), site.end());
  }
  return out;
}

SiteArray<float> dropout_gain(const ProcessContext& ctx, const DropoutNoise& cfg, const std::vector<Burst>& intervals) {
  SiteArray<float> gain(ctx.sites.size(), ctx.n_samples, 1.0f);
  const double depth = portable::pow(10.0, cfg.depth_db / 20.0);
  for (const Burst& b : intervals) {
    const std::size_t len = b.offset - b.onset;
    const std::size_t ramp =
        std::max<std::size_t>(1, std::min(len / 4, static_cast<std::size_t>(kDropoutRampS * ctx.sample_rate_hz)));
    float* row = gain.row(static_cast<std::size_t>(b.site)) + b.onset;
    for (std::size_t i = 0; i < len; ++i) {
      std::size_t edge = std::min(i, len - 1 - i);  // distance to the nearer end
      double w = edge >= ramp ? 1.0 : 0.5 - 0.5 * portable::cos(M_PI * static_cast<double>(edge) / ramp);
      double g = 1.0 + (depth - 1.0) * w;  // raised-cosine ramp from 1 to depth
      row[i] = std::min(row[i], static_cast<float>(g));
    }
  }
  return gain;
}

}  // namespace stethogen::noise
