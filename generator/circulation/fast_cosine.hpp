// An inline cosine for the raised-cosine pulses of the atria and the breathing, which the
// circulation's right-hand side evaluates about 200 000 times per record: half the time of the
// library cosine, whose general range reduction these arguments (0..pi) do not need. Plain
// double arithmetic in a fixed order (no FMA: the x86-64 baseline has none), so the result is
// the same on every machine of the architecture; within 4e-16 of std::cos
// (tests/circulation/test_fast_cosine.cpp).
#pragma once

#include <cmath>

#include "core/portable_math.hpp"

namespace stethogen::gen::fast {

// cos y for |y| <= pi/2: its Taylor polynomial to y^22 (remainder below 1e-19), in z = y^2 by
// Estrin's scheme (pairs, then pairs of pairs), which keeps the chain of dependent operations short.
inline double cos_small(double y) {
  constexpr double c[12] = {1.0,
                            -1.0 / 2,
                            1.0 / 24,
                            -1.0 / 720,
                            1.0 / 40320,
                            -1.0 / 3628800,
                            1.0 / 479001600,
                            -1.0 / 87178291200.0,
                            1.0 / 20922789888000.0,
                            -1.0 / 6402373705728000.0,
                            1.0 / 2432902008176640000.0,
                            -1.0 / 1124000727777607680000.0};
  const double z = y * y, z2 = z * z, z4 = z2 * z2, z8 = z4 * z4;
  const double p0 = c[0] + c[1] * z, p1 = c[2] + c[3] * z, p2 = c[4] + c[5] * z;
  const double p3 = c[6] + c[7] * z, p4 = c[8] + c[9] * z, p5 = c[10] + c[11] * z;
  const double q0 = p0 + p1 * z2, q1 = p2 + p3 * z2, q2 = p4 + p5 * z2;
  return (q0 + q1 * z4) + q2 * z8;
}

// cos theta for theta in [0, pi] (the raised-cosine pulses), reflected about pi/2 above it;
// other arguments go to portable::cos.
inline double cos_half_turn(double theta) {
  constexpr double kPi = 3.141592653589793116, kPiLo = 1.2246467991473532e-16;  // pi = kPi + kPiLo
  if (!(theta >= 0.0 && theta <= kPi)) return portable::cos(theta);
  if (theta <= 0.5 * kPi) return cos_small(theta);
  return -cos_small((kPi - theta) + kPiLo);
}

}  // namespace stethogen::gen::fast
