// Elementary functions that give the same bits on every x86-64 machine. The C library picks an
// FMA or a non-FMA version of exp, log, pow, sin, cos ... at run time, so results (and, through
// the engine's sensitivity, valve event times and samples) would depend on the machine a shard
// runs on, which DESIGN.md "Determinism" rules out. These use plain double arithmetic in a fixed
// order; the project never enables FMA contraction (no -mfma, no -ffp-contract=fast), so every
// machine rounds every step alike. Accuracy (tests/core/test_portable_math.cpp, against the C
// library's long double functions, 64-bit significand):
//   exp   Tang (1989, ACM Trans Math Softw 15:144) table method; within 1 ulp; overflow +inf
//         above ln(DBL_MAX), gradual underflow to 0 below -745.13.
//   log   Cody & Waite (1980, Software Manual for the Elementary Functions, ch. 5) reduction to
//         m in [sqrt(1/2), sqrt(2)), s = (m-1)/(m+1), log m = 2 atanh s by its series to s^21
//         (remainder below 2e-18 relative), written so the large terms add last; within 1 ulp.
//   pow   exp(y log x) for x > 0 (integer y for x < 0); relative error at most 3 + 2 |y ln x| ulp,
//         i.e. a few ulp for the exponents the engine uses (|y ln x| below ~20).
//   sin, cos  Cody & Waite reduction by pi/2 in three parts (33 + 33 + 53 bits) for
//         |x| < 8e5, beyond that in x87 long double (exact steps, pi/2 to 97 bits) up to ~3e9;
//         Taylor polynomials to r^17 / r^18 on |r| <= pi/4 (remainder below 2e-18); within
//         1 ulp (absolute 2e-16 near the zeros). Beyond 3e9 the reduction loses accuracy.
//   erfc  below 0.7 as 1 - erf x, erf by its series of positive terms (Abramowitz & Stegun
//         1964, 7.1.6); above by the continued fraction A&S 7.1.14 evaluated from a fixed depth
//         (400 terms below 1.5, 120 below 3, 60 above); exp(-x^2) from x^2 split exactly in
//         two (as Cody 1969, Math Comp 23:631, does); relative error below 1.5e-15.
//   expf, logf, sinf, cosf  the double versions rounded to float (within 1 float ulp).
#pragma once

#include <cmath>
#include <cstdint>
#include <cstring>
#include <limits>

namespace stethogen::portable {

namespace detail {

// 2^(j/32), j = 0..31, correctly rounded (also used by the two-lane exp of the circulation).
alignas(64) inline constexpr double kExp2Table[32] = {
    0x1.0000000000000p+0, 0x1.059b0d3158574p+0, 0x1.0b5586cf9890fp+0, 0x1.11301d0125b51p+0,
    0x1.172b83c7d517bp+0, 0x1.1d4873168b9aap+0, 0x1.2387a6e756238p+0, 0x1.29e9df51fdee1p+0,
    0x1.306fe0a31b715p+0, 0x1.371a7373aa9cbp+0, 0x1.3dea64c123422p+0, 0x1.44e086061892dp+0,
    0x1.4bfdad5362a27p+0, 0x1.5342b569d4f82p+0, 0x1.5ab07dd485429p+0, 0x1.6247eb03a5585p+0,
    0x1.6a09e667f3bcdp+0, 0x1.71f75e8ec5f74p+0, 0x1.7a11473eb0187p+0, 0x1.82589994cce13p+0,
    0x1.8ace5422aa0dbp+0, 0x1.93737b0cdc5e5p+0, 0x1.9c49182a3f090p+0, 0x1.a5503b23e255dp+0,
    0x1.ae89f995ad3adp+0, 0x1.b7f76f2fb5e47p+0, 0x1.c199bdd85529cp+0, 0x1.cb720dcef9069p+0,
    0x1.d5818dcfba487p+0, 0x1.dfc97337b9b5fp+0, 0x1.ea4afa2a490dap+0, 0x1.f50765b6e4540p+0};

inline constexpr double kShift = 0x1.8p52;  // adding it rounds a double below 2^51 to a whole number
inline constexpr double kLn2High = 0x1.62e42feep-1;        // ln 2 to 32 bits (k * it is exact),
inline constexpr double kLn2Low = 0x1.a39ef35793c76p-33;   // and the rest

inline std::uint64_t bits_of(double x) {
  std::uint64_t b;
  std::memcpy(&b, &x, sizeof b);
  return b;
}
inline double from_bits(std::uint64_t b) {
  double x;
  std::memcpy(&x, &b, sizeof x);
  return x;
}
// 2^k for -1022 <= k <= 1023.
inline double power_of_two(int k) { return from_bits(static_cast<std::uint64_t>(k + 1023) << 52); }

// sin and cos of hi + lo, |hi + lo| <= pi/4 (plus rounding), |lo| <= ulp(hi) or so.
inline double sin_kernel(double hi, double lo) {
  constexpr double s3 = -1.0 / 6, s5 = 1.0 / 120, s7 = -1.0 / 5040, s9 = 1.0 / 362880,
                   s11 = -1.0 / 39916800, s13 = 1.0 / 6227020800, s15 = -1.0 / 1307674368000,
                   s17 = 1.0 / 355687428096000;
  const double z = hi * hi;
  const double tail = z * (s5 + z * (s7 + z * (s9 + z * (s11 + z * (s13 + z * (s15 + z * s17))))));
  return hi + (hi * z * (s3 + tail) + lo * (1.0 - 0.5 * z));
}
inline double cos_kernel(double hi, double lo) {
  constexpr double c4 = 1.0 / 24, c6 = -1.0 / 720, c8 = 1.0 / 40320, c10 = -1.0 / 3628800,
                   c12 = 1.0 / 479001600, c14 = -1.0 / 87178291200, c16 = 1.0 / 20922789888000,
                   c18 = -1.0 / 6402373705728000;
  const double z = hi * hi;
  const double q = c4 + z * (c6 + z * (c8 + z * (c10 + z * (c12 + z * (c14 + z * (c16 + z * c18))))));
  const double half_z = 0.5 * z, w = 1.0 - half_z;
  // 1 - z/2 rounds; its rounding error is put back with the small terms.
  return w + (((1.0 - w) - half_z) + (z * z * q - hi * lo));
}

// x = n pi/2 + (hi + lo); returns n mod 4.
inline int reduce_half_pi(double x, double& hi, double& lo) {
  constexpr double kTwoOverPi = 0x1.45f306dc9c883p-1;
  constexpr double p1 = 0x1.921fb544p0, p2 = 0x1.0b4611a6p-34, p3 = 0x1.3198a2e037073p-69;
  if (std::fabs(x) < 8e5) {
    const double n = (x * kTwoOverPi + kShift) - kShift;
    const double t = x - n * p1;  // exact: n < 2^20, p1 has 33 bits, t and x agree in sign/scale
    const double w = n * p2;      // exact
    const double y = t - w;       // two-sum of t - w: y + e exactly
    const double yv = y - t;
    const double e = (t - (y - yv)) - (w + yv);
    const double v = n * p3;
    hi = y - v;
    lo = ((y - hi) - v) + e;
    return static_cast<int>(static_cast<std::int64_t>(n) & 3);
  }
  // x87 long double: 64-bit significand, the same on every x86-64 machine.
  const long double two_over_pi = 0xa2f9836e4e44152ap-64L, q1 = 0x1.921fb544p0L,
                    q2 = 0x85a308d313198a2ep-97L;
  const long double n = std::rint(static_cast<long double>(x) * two_over_pi);
  const long double r = (static_cast<long double>(x) - n * q1) - n * q2;
  hi = static_cast<double>(r);
  lo = static_cast<double>(r - hi);
  return static_cast<int>(static_cast<std::int64_t>(std::fmod(n, 4.0L)) & 3);
}

}  // namespace detail

inline double exp(double x) {
  using namespace detail;
  constexpr double kInverseStep = 0x1.71547652b82fep+5;  // 32 / ln 2
  constexpr double kStepHigh = kLn2High / 32, kStepLow = kLn2Low / 32;
  constexpr double c2 = 1.0 / 2, c3 = 1.0 / 6, c4 = 1.0 / 24, c5 = 1.0 / 120, c6 = 1.0 / 720;
  if (!(x <= 709.782712893384)) return x != x ? x : std::numeric_limits<double>::infinity();
  if (x < -745.2) return 0.0;
  const double nd = (x * kInverseStep + kShift) - kShift;  // round(32 x / ln 2)
  const std::int64_t n = static_cast<std::int64_t>(nd);
  const double r = (x - nd * kStepHigh) - nd * kStepLow;  // |r| <= ln2/64
  const int j = static_cast<int>(n & 31), k = static_cast<int>((n - j) / 32);
  const double r2 = r * r;
  const double expm1_r = r + r2 * (c2 + c3 * r) + (r2 * r2) * ((c4 + c5 * r) + c6 * r2);
  const double t = kExp2Table[j];
  const double mantissa = t + t * expm1_r;  // in [1, 2) up to rounding
  if (k > 1023) return mantissa * power_of_two(k - 1) * 2.0;
  if (k < -1021) return (mantissa * power_of_two(k + 64)) * 0x1p-64;  // rounds once into subnormals
  return mantissa * power_of_two(k);
}

inline double log(double x) {
  using namespace detail;
  if (!(x > 0.0)) return x == 0.0 ? -std::numeric_limits<double>::infinity() : std::numeric_limits<double>::quiet_NaN();
  if (x == std::numeric_limits<double>::infinity()) return x;
  int k = 0;
  if (x < 0x1p-1022) {  // subnormal: scale into the normal range
    x *= 0x1p54;
    k = -54;
  }
  const std::uint64_t b = bits_of(x);
  k += static_cast<int>(b >> 52) - 1023;
  double m = from_bits((b & 0x000fffffffffffffULL) | 0x3ff0000000000000ULL);  // [1, 2)
  if (m > 0x1.6a09e667f3bcdp0) {  // sqrt 2
    m *= 0.5;
    ++k;
  }
  const double f = m - 1.0;  // exact
  const double s = f / (2.0 + f), z = s * s;
  // 2 atanh(s) = 2 s + s R with R = sum 2 s^(2i) / (2i + 1), i = 1..10.
  const double R = z * (2.0 / 3 + z * (2.0 / 5 + z * (2.0 / 7 + z * (2.0 / 9 + z * (2.0 / 11 + z * (2.0 / 13 +
                   z * (2.0 / 15 + z * (2.0 / 17 + z * (2.0 / 19 + z * (2.0 / 21))))))))));
  // 2 s = f - s f and s f = f^2/2 - s f^2/2, so log m = f - (f^2/2 - s (f^2/2 + R)).
  const double half_f2 = 0.5 * f * f, dk = k;
  return dk * kLn2High - ((half_f2 - (s * (half_f2 + R) + dk * kLn2Low)) - f);
}

inline double pow(double x, double y) {
  if (y == 0.0 || x == 1.0) return 1.0;
  if (x != x || y != y) return std::numeric_limits<double>::quiet_NaN();
  const bool whole = std::floor(y) == y;
  const bool odd = whole && std::fabs(y) < 0x1p53 && std::fmod(y, 2.0) != 0.0;
  double sign = 1.0;
  if (x < 0.0 || (x == 0.0 && std::signbit(x))) {
    if (!whole) return std::numeric_limits<double>::quiet_NaN();
    if (odd) sign = -1.0;
    x = -x;
  }
  if (x == 0.0) return y > 0.0 ? sign * 0.0 : sign * std::numeric_limits<double>::infinity();
  if (x == std::numeric_limits<double>::infinity()) return y > 0.0 ? sign * x : sign * 0.0;
  return sign * exp(y * log(x));
}

inline double sin(double x) {
  if (!std::isfinite(x)) return std::numeric_limits<double>::quiet_NaN();
  if (std::fabs(x) < 0x1p-27) return x;  // x^3/6 is below half an ulp (keeps -0)
  double hi, lo;
  switch (detail::reduce_half_pi(x, hi, lo)) {
    case 0: return detail::sin_kernel(hi, lo);
    case 1: return detail::cos_kernel(hi, lo);
    case 2: return -detail::sin_kernel(hi, lo);
    default: return -detail::cos_kernel(hi, lo);
  }
}

inline double cos(double x) {
  if (!std::isfinite(x)) return std::numeric_limits<double>::quiet_NaN();
  double hi, lo;
  switch (detail::reduce_half_pi(x, hi, lo)) {
    case 0: return detail::cos_kernel(hi, lo);
    case 1: return -detail::sin_kernel(hi, lo);
    case 2: return -detail::cos_kernel(hi, lo);
    default: return detail::sin_kernel(hi, lo);
  }
}

inline double erfc(double x) {
  constexpr double kInverseSqrtPi = 0x1.20dd750429b6dp-1, kTwoOverSqrtPi = 0x1.20dd750429b6dp0;
  if (x != x) return x;
  if (x < 0.0) return 2.0 - erfc(-x);
  if (x > 27.3) return 0.0;  // below the smallest subnormal
  // exp(-x^2) = exp(-h^2) exp((h - x)(h + x)), h = x to 26 bits, so that h^2 is exact.
  const double h = detail::from_bits(detail::bits_of(x) & 0xfffffffff8000000ULL);
  const double exp_minus_x2 = exp(-h * h) * exp((h - x) * (h + x));
  const double x2 = x * x;
  if (x < 0.7) {
    // erf x = 2/sqrt(pi) exp(-x^2) sum 2^n x^(2n+1) / (1 3 5 ... (2n+1))
    double term = x, sum = x;
    for (int n = 1; n < 80 && term > 1e-17 * sum; ++n) {
      term *= 2.0 * x2 / (2 * n + 1);
      sum += term;
    }
    return 1.0 - kTwoOverSqrtPi * exp_minus_x2 * sum;
  }
  // erfc x = exp(-x^2)/sqrt(pi) / (x + (1/2)/(x + 1/(x + (3/2)/(x + 2/(x + ...)))))
  double f = x;
  for (int k = x < 1.5 ? 400 : (x < 3.0 ? 120 : 60); k >= 1; --k) f = x + (0.5 * k) / f;
  return exp_minus_x2 * kInverseSqrtPi / f;
}

inline float expf(float x) { return static_cast<float>(exp(x)); }
inline float logf(float x) { return static_cast<float>(log(x)); }
inline float sinf(float x) { return static_cast<float>(sin(x)); }
inline float cosf(float x) { return static_cast<float>(cos(x)); }

}  // namespace stethogen::portable
