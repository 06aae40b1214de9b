// One heart-sound component (M1, T1, A2, P2, S3 or S4 of one beat) as a continuous-time
// transient: a damped oscillation whose envelope rises smoothly from its start and decays with
// the damping, and whose instantaneous frequency falls exponentially from f_start to f_end
// (the nonlinear transient chirp of Xu, Durand & Pibarot 2000, IEEE Trans Biomed Eng 47:1328).
// Evaluated analytically at any sample time, so rendering at any rate is alias-free as long as
// the spectrum is compact (docs/sounds.md, "Band limitation").
#pragma once

#include <complex>
#include <cstdint>

#include "core/types.hpp"

namespace stethogen::gen {

// Envelope shape e(x) = (x/k)^k exp(k - x), x = (t - start)/tau, k = kEnvelopeOrder: peak 1 at x = k.
inline constexpr double kEnvelopeOrder = 2.0;
// Onset and offset of a component: where its envelope crosses this fraction of its peak.
inline constexpr double kEnvelopeThreshold = 0.1;
// The envelope is treated as zero below this fraction of its peak (end of the support).
inline constexpr double kSupportFraction = 1e-5;

struct SoundComponent {
  EventKind kind = EventKind::M1;
  std::int32_t beat = 0;
  double start_s = 0;       // envelope origin (the closure or filling instant)
  double amplitude = 0;     // peak envelope, heart-level amplitude units (docs/sounds.md)
  double tau_s = 0.01;      // envelope time constant from the damping
  double f_start_hz = 0;    // instantaneous frequency at the start
  double f_end_hz = 0;      // frequency the oscillation settles to
  double chirp_tau_s = 0.02;

  // Complex (quadrature) waveform at record time t: amplitude * e(x) * exp(i phase). The sound
  // is its real part; its magnitude is the component's envelope.
  std::complex<double> analytic(double time_s) const;
  double envelope(double time_s) const;
  double instantaneous_frequency_hz(double time_s) const;
  double support_end_s() const;
  // weight * analytic(t_first + i / rate) for i in [0, n), the same values as analytic() (to
  // rounding) with the exponentials and the phase advanced by recurrence, re-anchored every block.
  void render(double t_first_s, double rate_hz, std::size_t n, double weight, std::complex<double>* out) const;
  // Heart-level truth in closed form (threshold crossings of the envelope).
  double onset_s() const;
  double peak_s() const;
  double offset_s() const;
};

// Solutions of e(x) = fraction on the rising (x < k) and falling (x > k) side.
double envelope_rising_crossing(double fraction);
double envelope_falling_crossing(double fraction);

}  // namespace stethogen::gen
