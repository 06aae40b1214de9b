// exp for two doubles at once in one SSE2 vector, for the right-hand side's independent
// exponentials (the four chambers' EDPVRs, the pericardium). Tang's table method (Tang 1989,
// ACM Trans Math Softw 15:144): x = (32 k + j) ln2/32 + r with Cody-Waite range reduction
// (Cody & Waite 1980, Software Manual for the Elementary Functions: ln2/32 in two parts, the
// first with trailing zeros so that n times it is exact), 2^(j/32) from a table of correctly
// rounded values, exp(r) - 1 for |r| <= ln2/64 by its Taylor polynomial to r^6 (remainder below
// 4e-18). Plain double arithmetic in a fixed order (no FMA, which the x86-64 baseline lacks),
// so every x86-64 machine gets the same bits, unlike the library exp, which picks an FMA
// version at run time. Within 1 ulp of the correctly rounded result on [-708, 709]; above it
// +inf, below it 0 (the library gives subnormals there); NaN stays NaN
// (tests/circulation/test_vector_exp.cpp).
#pragma once

#include <cstdint>
#include <limits>

#include "core/portable_math.hpp"

namespace stethogen::gen::fast {

using Double2 = double __attribute__((vector_size(16)));
using Int2 = std::int64_t __attribute__((vector_size(16)));

// 2^(j/32), j = 0..31, correctly rounded: the scalar portable::exp's table.
using portable::detail::kExp2Table;

inline Double2 exp2x(Double2 x) {
  constexpr double kShift = 0x1.8p52;               // adding it rounds to a whole number
  constexpr double kInverseStep = 0x1.71547652b82fep+5;  // 32 / ln 2
  constexpr double kStepHigh = 0x1.62e42feep-6;     // ln2/32: 32 significant bits,
  constexpr double kStepLow = 0x1.a39ef35793c76p-38;  // and the rest
  constexpr double kHighest = 709.0, kLowest = -708.0;
  constexpr double c2 = 1.0 / 2, c3 = 1.0 / 6, c4 = 1.0 / 24, c5 = 1.0 / 120, c6 = 1.0 / 720;
  Double2 nd = x * kInverseStep + kShift;
  const Int2 n = (Int2)nd - (Int2)(Double2{kShift, kShift});  // round(32 x / ln2), from the bits
  nd -= kShift;
  const Double2 r = (x - nd * kStepHigh) - nd * kStepLow;
  const Int2 j = n & 31;
  // 2^k 2^(j/32) by adding k = (n - j) / 32 to the table value's exponent field.
  const Double2 table = {kExp2Table[j[0]], kExp2Table[j[1]]};
  const Double2 scale = (Double2)((Int2)table + ((n - j) << 47));
  const Double2 r2 = r * r;
  const Double2 expm1_r = r + r2 * (c2 + c3 * r) + (r2 * r2) * ((c4 + c5 * r) + c6 * r2);
  const Double2 result = scale + scale * expm1_r;
  const Double2 inf = {std::numeric_limits<double>::infinity(), std::numeric_limits<double>::infinity()};
  const Double2 zero = {0.0, 0.0};
  return x > kHighest ? inf : (x < kLowest ? zero : result);
}

}  // namespace stethogen::gen::fast
