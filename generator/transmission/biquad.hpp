// Second-order IIR sections (biquads) in cascade: the one filter form used for the chest wall and
// the sensors. Designs go through the bilinear transform with the corner pre-warped, the
// convention of scipy.signal.butter(..., fs=...), so the coefficients can be compared one to one.
#pragma once

#include <complex>
#include <vector>

namespace stethogen::gen {

// y[n] = b0 x[n] + b1 x[n-1] + b2 x[n-2] - a1 y[n-1] - a2 y[n-2]   (a0 normalised to 1)
struct Biquad {
  double b0 = 1, b1 = 0, b2 = 0, a1 = 0, a2 = 0;
};

// A cascade of biquads; an empty cascade passes the signal unchanged (gain applied).
struct FilterCascade {
  std::vector<Biquad> sections;
  double gain = 1.0;

  // Complex frequency response at frequency_hz for sample rate fs_hz.
  std::complex<double> response(double frequency_hz, double fs_hz) const;
  // Time constant (s) of the slowest pole: how long the impulse response takes to fall by 1/e.
  double slowest_time_constant_s(double fs_hz) const;
  void append(const FilterCascade& other);
};

// Butterworth sections, corner frequency_hz pre-warped; corners at or above 0.45 fs are
// clamped to 0.45 fs (see docs/sounds.md: above that the corner lies outside the band we keep).
Biquad butter_lowpass1(double corner_hz, double fs_hz);
Biquad butter_highpass1(double corner_hz, double fs_hz);
Biquad butter_lowpass2(double corner_hz, double fs_hz);
Biquad butter_highpass2(double corner_hz, double fs_hz);
// Peaking equaliser (Bristow-Johnson, "Cookbook formulae for audio EQ biquad filter
// coefficients"): gain_db at centre_hz, bandwidth set by q.
Biquad peaking(double centre_hz, double q, double gain_db, double fs_hz);

// Largest corner frequency the designs accept at this rate.
double max_corner_hz(double fs_hz);

// Filters in place from a zero state (transposed direct form II). T = float, double or
// std::complex<double> (real coefficients act on real and imaginary parts alike).
template <typename T>
void filter_in_place(const FilterCascade& cascade, T* data, std::size_t n);
// The same from a given state, 2 values per section (all zero = at rest), left in state after the
// last sample so that a later call continues the signal. The state is before the cascade's gain.
// The filter is linear: the state of a sum of signals is the sum of their states.
template <typename T>
void filter_continue(const FilterCascade& cascade, T* data, std::size_t n, T* state);

// filter_continue on count independent signals (signal c: data[c], n[c] samples, state[c]),
// the same values, computed kLanes at a time in lockstep: one signal's recurrence alone waits on
// its own latency chain, two keep the CPU busy (four ran slower on the development machine: the
// states no longer fit in the registers).
inline constexpr std::size_t kLanes = 2;
void filter_continue_together(const FilterCascade& cascade, std::complex<double>* const* data,
                              const std::size_t* n, std::complex<double>* const* state, std::size_t count);

// The same in single precision (inputs, states and outputs stay double; coefficients, states and
// arithmetic inside the filter are float), two complex signals per 4-float vector and up to four
// signals in lockstep: half the vector operations. Each signal's values are the same whichever
// signals run beside it. Use only where single_precision_suffices.
void filter_continue_together_single(const FilterCascade& cascade, std::complex<double>* const* data,
                                     const std::size_t* n, std::complex<double>* const* state, std::size_t count);

// The gate of the single-precision path, from the poles: for every pole p of the double
// coefficients, the shift of the nearest pole of the float-rounded coefficients plus float's
// rounding per step (2^-24), both amplified by the pole's gain 1 / (1 - |p|), stay below
// kSinglePrecisionTolerance. Near a pole the relative response error is about that bound, and the
// rounding noise of the recursion is about that fraction of the signal. True for the 20 Hz
// high-pass at 4 kHz (1 - |p| = 0.031), false for the accelerometer's 10 Hz second-order
// high-pass at 4 kHz and above (poles 0.011 from the unit circle and 0.022 apart).
// At most kMaxSingleSections sections (the bell's five at 4 kHz).
inline constexpr double kSinglePrecisionTolerance = 1e-4;
inline constexpr std::size_t kMaxSingleSections = 5;
double single_precision_error_bound(const FilterCascade& cascade);
bool single_precision_suffices(const FilterCascade& cascade);

}  // namespace stethogen::gen
