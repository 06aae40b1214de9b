// Functions the rendering and noise stages need beyond core/portable_math.hpp, built from it in
// plain double arithmetic, so their results do not depend on which libm variant (FMA or not)
// the CPU selects at run time (DESIGN.md "Determinism": same samples on every x86-64 machine).
#pragma once

#include <cmath>
#include <complex>
#include <numbers>

#include "core/portable_math.hpp"

namespace stethogen::portable_extra {

// tan x = sin x / cos x: within a few ulp, enough for the bilinear pre-warp (corners below
// 0.45 fs, so cos stays away from zero).
inline double tan(double x) { return portable::sin(x) / portable::cos(x); }

inline double log10(double x) { return portable::log(x) * (1.0 / std::numbers::ln10); }

// r exp(i theta), like std::polar (whose sincos is one of libm's CPU-dependent variants).
inline std::complex<double> polar(double r, double theta) {
  return {r * portable::cos(theta), r * portable::sin(theta)};
}

// Modified Bessel function of the first kind, order 0, by its power series
// I0(x) = sum_k ((x/2)^k / k!)^2 (Abramowitz & Stegun 1964, Handbook of Mathematical Functions,
// 9.6.12): every term positive, so the sum is accurate to rounding; stops once a term no longer
// changes it. For the Kaiser window (x up to ~20 needs ~40 terms).
inline double bessel_i0(double x) {
  const double q = 0.25 * x * x;
  double term = 1.0, sum = 1.0;
  for (int k = 1; k < 500; ++k) {
    term *= q / (static_cast<double>(k) * k);
    if (sum + term == sum) break;
    sum += term;
  }
  return sum;
}

}  // namespace stethogen::portable_extra
