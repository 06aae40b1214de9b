// Inline exp, log and the raised-cosine shapes for the circulation's right-hand side, which calls
// them about a million times per record. Plain double arithmetic in a fixed order (no table
// built at run time, no FMA: the x86-64 baseline has none), so the results are the same on every
// machine of the architecture. Within 2 ulp (exp), 4 ulp (log, near 1) and 4e-16 (cosine) of
// the standard library (tests/circulation/test_fast_math.cpp); outside the ranges the fast paths
// cover they return the standard library's values.
#pragma once

#include <bit>
#include <cmath>
#include <cstdint>

namespace stethogen::gen::fast {

namespace detail {

// 2^(j/64), j = 0..63, correctly rounded (computed in 60-digit decimal arithmetic).
inline constexpr double kExp2Table[64] = {
    0x1.0000000000000p+0, 0x1.02c9a3e778061p+0, 0x1.059b0d3158574p+0, 0x1.0874518759bc8p+0,
    0x1.0b5586cf9890fp+0, 0x1.0e3ec32d3d1a2p+0, 0x1.11301d0125b51p+0, 0x1.1429aaea92de0p+0,
    0x1.172b83c7d517bp+0, 0x1.1a35beb6fcb75p+0, 0x1.1d4873168b9aap+0, 0x1.2063b88628cd6p+0,
    0x1.2387a6e756238p+0, 0x1.26b4565e27cddp+0, 0x1.29e9df51fdee1p+0, 0x1.2d285a6e4030bp+0,
    0x1.306fe0a31b715p+0, 0x1.33c08b26416ffp+0, 0x1.371a7373aa9cbp+0, 0x1.3a7db34e59ff7p+0,
    0x1.3dea64c123422p+0, 0x1.4160a21f72e2ap+0, 0x1.44e086061892dp+0, 0x1.486a2b5c13cd0p+0,
    0x1.4bfdad5362a27p+0, 0x1.4f9b2769d2ca7p+0, 0x1.5342b569d4f82p+0, 0x1.56f4736b527dap+0,
    0x1.5ab07dd485429p+0, 0x1.5e76f15ad2148p+0, 0x1.6247eb03a5585p+0, 0x1.6623882552225p+0,
    0x1.6a09e667f3bcdp+0, 0x1.6dfb23c651a2fp+0, 0x1.71f75e8ec5f74p+0, 0x1.75feb564267c9p+0,
    0x1.7a11473eb0187p+0, 0x1.7e2f336cf4e62p+0, 0x1.82589994cce13p+0, 0x1.868d99b4492edp+0,
    0x1.8ace5422aa0dbp+0, 0x1.8f1ae99157736p+0, 0x1.93737b0cdc5e5p+0, 0x1.97d829fde4e50p+0,
    0x1.9c49182a3f090p+0, 0x1.a0c667b5de565p+0, 0x1.a5503b23e255dp+0, 0x1.a9e6b5579fdbfp+0,
    0x1.ae89f995ad3adp+0, 0x1.b33a2b84f15fbp+0, 0x1.b7f76f2fb5e47p+0, 0x1.bcc1e904bc1d2p+0,
    0x1.c199bdd85529cp+0, 0x1.c67f12e57d14bp+0, 0x1.cb720dcef9069p+0, 0x1.d072d4a07897cp+0,
    0x1.d5818dcfba487p+0, 0x1.da9e603db3285p+0, 0x1.dfc97337b9b5fp+0, 0x1.e502ee78b3ff6p+0,
    0x1.ea4afa2a490dap+0, 0x1.efa1bee615a27p+0, 0x1.f50765b6e4540p+0, 0x1.fa7c1819e90d8p+0,
};
inline constexpr double kInvLn2Over64 = 0x1.71547652b82fep+6;
// ln 2 / 64 split so that k * hi is exact for |k| < 2^24.
inline constexpr double kLn2Over64Hi = 0x1.62e42fe000000p-7, kLn2Over64Lo = 0x1.f473de6af278fp-36;
inline constexpr double kLn2Hi = 0x1.62e42fe000000p-1, kLn2Lo = 0x1.f473de6af278fp-30;
inline constexpr double kRoundShift = 0x1.8p52;  // adding it rounds to an integer held in the low bits
inline constexpr double kPi = 3.141592653589793116, kPiLo = 1.2246467991473532e-16;

}  // namespace detail

// e^x: x = (64 k + j) ln2/64 + r with |r| <= ln2/128, e^r by its Taylor polynomial to r^5
// (remainder below 4e-17), times the table entry and 2^k (Tang 1989, ACM Trans Math Softw 15:144).
inline double exp(double x) {
  using namespace detail;
  if (!(std::fabs(x) < 700.0)) return std::exp(x);  // near over/underflow, infinities, NaN
  const double shifted = x * kInvLn2Over64 + kRoundShift;
  const auto n = static_cast<std::int64_t>(std::bit_cast<std::uint64_t>(shifted) & 0xfffffffffffffULL) -
                 (std::int64_t{1} << 51);
  const double kd = shifted - kRoundShift;
  const double r = (x - kd * kLn2Over64Hi) - kd * kLn2Over64Lo;
  const double p = 1.0 + r * (1.0 + r * (0.5 + r * (1.0 / 6 + r * (1.0 / 24 + r * (1.0 / 120)))));
  const std::int64_t k = n >> 6;  // floor(n / 64)
  const double scale = std::bit_cast<double>(static_cast<std::uint64_t>(k + 1023) << 52);
  return kExp2Table[n & 63] * p * scale;
}

// ln x: x = 2^e m with m in [sqrt(1/2), sqrt(2)), ln m = 2 atanh(f), f = (m - 1) / (m + 1),
// |f| <= 0.172, by its series to f^21 (remainder below 1e-18).
inline double log(double x) {
  using namespace detail;
  if (!(x >= 0x1p-1000 && x <= 0x1p1000)) return std::log(x);  // zero, subnormal, huge, negative, NaN
  const std::uint64_t bits = std::bit_cast<std::uint64_t>(x);
  std::int64_t e = static_cast<std::int64_t>(bits >> 52) - 1023;
  double m = std::bit_cast<double>((bits & 0xfffffffffffffULL) | 0x3ff0000000000000ULL);
  if (m > 1.4142135623730951) {
    m *= 0.5;
    ++e;
  }
  const double f = (m - 1.0) / (m + 1.0), z = f * f;
  const double series =
      1.0 + z * (1.0 / 3 + z * (1.0 / 5 + z * (1.0 / 7 + z * (1.0 / 9 + z * (1.0 / 11 + z * (1.0 / 13 + z * (1.0 / 15 +
      z * (1.0 / 17 + z * (1.0 / 19 + z * (1.0 / 21))))))))));
  const double ed = static_cast<double>(e);
  return ed * kLn2Hi + (ed * kLn2Lo + 2.0 * f * series);
}

// cos y for |y| <= pi/2 by its Taylor polynomial to y^22 (remainder below 1e-19).
inline double cos_small(double y) {
  const double z = y * y;
  return 1.0 + z * (-1.0 / 2 + z * (1.0 / 24 + z * (-1.0 / 720 + z * (1.0 / 40320 + z * (-1.0 / 3628800 +
         z * (1.0 / 479001600 + z * (-1.0 / 87178291200.0 + z * (1.0 / 20922789888000.0 +
         z * (-1.0 / 6402373705728000.0 + z * (1.0 / 2432902008176640000.0 + z * (-1.0 / 1124000727777607680000.0)))))))))));
}

// cos theta for theta in [0, pi] (the raised-cosine pulses), reflected about pi/2 above it.
inline double cos_half_turn(double theta) {
  using namespace detail;
  if (!(theta >= 0.0 && theta <= kPi)) return std::cos(theta);
  if (theta <= 0.5 * kPi) return cos_small(theta);
  return -cos_small((kPi - theta) + kPiLo);
}

}  // namespace stethogen::gen::fast
