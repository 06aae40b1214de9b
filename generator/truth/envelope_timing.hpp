// Onset, peak and offset of a sound from its envelope (definition in docs/sounds.md, "Truth"):
// the peak is the envelope's maximum, onset and offset are where the envelope crosses
// kEnvelopeThreshold of that peak on either side, all interpolated between samples.
#pragma once

#include <cmath>
#include <complex>
#include <cstddef>

namespace stethogen::gen {

struct SoundTiming {
  double onset_s = NAN, peak_s = NAN, offset_s = NAN;
  double peak_envelope = 0;
  bool valid() const { return std::isfinite(peak_s); }
};

// envelope[i] is at time t0_s + i / rate_hz. Returns an invalid timing for an all-zero envelope.
SoundTiming measure_envelope(const double* envelope, std::size_t n, double t0_s, double rate_hz,
                             double threshold_fraction);
// The same from the squared envelope (power[i] = envelope[i]^2, e.g. std::norm of the analytic
// signal) with the same result as measure_envelope on sqrt(power): the root is taken only for
// the samples the measurement reads, not for the whole sound.
SoundTiming measure_power(const double* power, std::size_t n, double t0_s, double rate_hz,
                          double threshold_fraction);
// measure_power on std::norm(z[i]) for lo <= i < n and 0 before lo, the power formed only where
// the measurement reads it; largest_power is its largest value (the caller's pass over z knows it).
SoundTiming measure_analytic(const std::complex<double>* z, std::size_t lo, std::size_t n, double largest_power,
                             double t0_s, double rate_hz, double threshold_fraction);

}  // namespace stethogen::gen
