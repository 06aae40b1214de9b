// Breath sounds at the chest wall, gated by the respiration phase. Spectrum after Gavriely,
// Nissan, Rubin & Cugell 1995 ("Spectral characteristics of chest wall breath sounds in normal
// subjects", Thorax 50:1292): flat to a corner of a few hundred Hz, then falling about
// -13 to -15 dB/octave in inspiration, with an upper limit near 700-1000 Hz. Inspiration is
// louder than expiration; the same spectral shape is used for both (a simplification).
#include <algorithm>
#include <cmath>

#include <fmt/format.h>

#include "noise/processes.hpp"
#include "noise/spectral.hpp"
#include "generator/transmission/portable_extra.hpp"

namespace stethogen::noise {

namespace {

// Breath sounds differ more between chest sites than room noise does.
constexpr double kBreathSiteSpreadDb = 3.0;
// Extra power roll-off above the upper limit, so the band ends there rather than fading slowly.
constexpr double kUpperRolloffDbPerOctave = -60.0;
constexpr double kDbPerOctaveToExponent = 1.0 / (20.0 * 0.30102999566398120);  // amplitude exponent
// The envelope is smooth over a breath (seconds): evaluate the phase every few samples (4 ms
// at 4 kHz; linear interpolation of a sin^2 bump over a 0.3 s inspiration errs by < 0.05 %).
constexpr std::size_t kEnvelopeStep = 16;

double breath_amplitude(const BreathNoise& cfg, double f) {
  // Piecewise power law in log frequency: one logarithm and one exponential per bin.
  double log_gain = 0;
  if (f > cfg.corner_hz)
    log_gain += cfg.slope_db_per_octave * kDbPerOctaveToExponent * portable::log(f / cfg.corner_hz);
  if (f > cfg.upper_hz)
    log_gain += kUpperRolloffDbPerOctave * kDbPerOctaveToExponent * portable::log(f / cfg.upper_hz);
  return log_gain == 0 ? 1.0 : portable::exp(log_gain);
}

}  // namespace

Contribution breath_noise(const ProcessContext& ctx, const BreathNoise& cfg,
                          const std::function<double(double time_s)>& resp_phase, double inspiration_fraction) {
  Contribution c{"breath", true, ctx.array_to_overwrite(), {}};
  const std::size_t n = ctx.n_samples;
  auto amplitude = [&cfg](double f) { return breath_amplitude(cfg, f); };

  // Amplitude envelope over the breath cycle: a sin^2 bump over inspiration, a quieter one over
  // expiration; zero at the phase boundaries, so it is continuous across the cycle wrap.
  const double fi = std::clamp(inspiration_fraction, 0.05, 0.95);
  const double expiration_gain = portable::pow(10.0, cfg.expiration_db / 20.0);
  auto envelope_at = [&](std::size_t i) {
    double p = resp_phase(static_cast<double>(i) / ctx.sample_rate_hz);
    p -= std::floor(p);
    double s = p < fi ? portable::sin(M_PI * p / fi) : portable::sin(M_PI * (p - fi) / (1 - fi));
    return (p < fi ? 1.0 : expiration_gain) * s * s;
  };
  // Each point once: the end of one step is the start of the next.
  std::vector<float> envelope(n);
  double e0 = envelope_at(0);
  for (std::size_t i0 = 0; i0 < n; i0 += kEnvelopeStep) {
    const double e1 = envelope_at(std::min(i0 + kEnvelopeStep, n));
    for (std::size_t k = 0; k < kEnvelopeStep && i0 + k < n; ++k)
      envelope[i0 + k] = static_cast<float>(e0 + (e1 - e0) * static_cast<double>(k) / kEnvelopeStep);
    e0 = e1;
  }

  auto response = cached_response(fmt::format("breath {} {} {}", cfg.corner_hz, cfg.slope_db_per_octave, cfg.upper_hz),
                                  n, ctx.sample_rate_hz, amplitude);
  c.mean_power = spread_over_sites(ctx, ProcessKind::breath, cfg.site_coherence, kBreathSiteSpreadDb, *response,
                                   envelope.data(), c.samples);
  return c;
}

}  // namespace stethogen::noise
