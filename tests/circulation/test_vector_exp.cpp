// fast::exp2x against the C library's exp in extended precision (std::exp on long double,
// 64-bit significand, rounded to double) over the whole domain, densely over the arguments the
// right-hand side uses (EDPVR and pericardial exponents, a few units either side of 0).
#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <cstring>
#include <limits>
#include <random>

#include "generator/circulation/vector_exp.hpp"

using namespace stethogen::gen;

namespace {

// Distance in units in the last place between two positive finite doubles.
std::int64_t ulps_apart(double a, double b) {
  std::int64_t ia, ib;
  std::memcpy(&ia, &a, sizeof a);
  std::memcpy(&ib, &b, sizeof b);
  return ia > ib ? ia - ib : ib - ia;
}

std::int64_t worst_ulps(double lo, double hi, int count, std::uint64_t seed) {
  std::mt19937_64 rng(seed);
  std::uniform_real_distribution<double> uniform(lo, hi);
  std::int64_t worst = 0;
  for (int i = 0; i < count; i += 2) {
    const fast::Double2 x = {uniform(rng), i % 4 == 0 ? lo + (hi - lo) * i / count : uniform(rng)};
    const fast::Double2 y = fast::exp2x(x);
    for (int lane = 0; lane < 2; ++lane) {
      const double reference = static_cast<double>(std::exp(static_cast<long double>(x[lane])));
      worst = std::max(worst, ulps_apart(y[lane], reference));
    }
  }
  return worst;
}

}  // namespace

TEST_CASE("the vector exp is within 1 ulp of the extended-precision library exp", "[circulation]") {
  // The arguments in use (EDPVR and pericardium: |B dv| and |lambda dV| below ~20).
  CHECK(worst_ulps(-20.0, 20.0, 2'000'000, 1) <= 1);
  CHECK(worst_ulps(-1e-3, 1e-3, 200'000, 2) <= 1);
  // The rest of the domain.
  CHECK(worst_ulps(-708.0, 709.0, 400'000, 3) <= 1);
  // Whole multiples of the step ln2/32 (r near 0) and the table's own points.
  for (int n = -2000; n <= 2000; ++n) {
    const double x = n * (M_LN2 / 32);
    const double y = fast::exp2x(fast::Double2{x, -x})[0];
    CHECK(ulps_apart(y, static_cast<double>(std::exp(static_cast<long double>(x)))) <= 1);
  }
}

TEST_CASE("the vector exp's edges: exact 1 at 0, overflow, underflow and NaN", "[circulation]") {
  const double nan = std::numeric_limits<double>::quiet_NaN(), inf = std::numeric_limits<double>::infinity();
  const fast::Double2 a = fast::exp2x(fast::Double2{0.0, -0.0});
  CHECK(a[0] == 1.0);
  CHECK(a[1] == 1.0);
  const fast::Double2 b = fast::exp2x(fast::Double2{709.5, -708.5});
  CHECK(b[0] == inf);  // the library gives 1.35e308 here; documented domain edge
  CHECK(b[1] == 0.0);  // the library gives a subnormal
  const fast::Double2 c = fast::exp2x(fast::Double2{nan, inf});
  CHECK(std::isnan(c[0]));
  CHECK(c[1] == inf);
  const fast::Double2 d = fast::exp2x(fast::Double2{-inf, 709.0});
  CHECK(d[0] == 0.0);
  CHECK(ulps_apart(d[1], static_cast<double>(std::exp(709.0L))) <= 1);
}
