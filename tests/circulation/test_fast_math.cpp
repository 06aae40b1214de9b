// The circulation's inline exp, log and cosine against the C++ standard library (glibc's libm,
// documented within 1 ulp of the correctly rounded result).
#include <catch2/catch.hpp>

#include <cmath>
#include <limits>

#include "generator/circulation/fast_math.hpp"

using namespace stethogen::gen;

namespace {

// Distance in units in the last place of the reference.
double ulps(double value, double reference) {
  const double ulp = std::nextafter(std::fabs(reference), INFINITY) - std::fabs(reference);
  return std::fabs(value - reference) / ulp;
}

}  // namespace

TEST_CASE("fast exp agrees with std::exp within 2 ulp over its whole range") {
  double worst = 0;
  for (int i = 0; i <= 200000; ++i) {
    const double x = -699.9 + 1399.8 * i / 200000.0;
    worst = std::max(worst, ulps(fast::exp(x), std::exp(x)));
  }
  // The circulation's arguments are small: EDPVR and pericardium (-5..6), Hill powers (< 3).
  for (int i = 0; i <= 200000; ++i) {
    const double x = -8.0 + 16.0 * i / 200000.0 + 1e-7;
    worst = std::max(worst, ulps(fast::exp(x), std::exp(x)));
  }
  CHECK(worst <= 2.0);
  CHECK(fast::exp(0.0) == 1.0);
  CHECK(fast::exp(800.0) == std::exp(800.0));
  CHECK(fast::exp(-800.0) == 0.0);
  CHECK(std::isnan(fast::exp(std::numeric_limits<double>::quiet_NaN())));
}

TEST_CASE("fast log agrees with std::log within 4 ulp") {
  double worst = 0;
  for (int i = 1; i <= 200000; ++i) {
    const double x = 2.0 * i / 200000.0;  // the Hill pulses' argument range (0, 2]
    worst = std::max(worst, ulps(fast::log(x), std::log(x)));
  }
  for (int i = -3000; i <= 3000; ++i) {
    const double x = std::pow(10.0, i * 0.1) * 1.2345;
    worst = std::max(worst, ulps(fast::log(x), std::log(x)));
  }
  // Near x = 1 the result is small and f's rounding weighs most (3 ulp seen).
  CHECK(worst <= 4.0);
  CHECK(fast::log(1.0) == 0.0);
  CHECK(fast::log(0.0) == -INFINITY);
  CHECK(std::isnan(fast::log(-1.0)));
}

TEST_CASE("fast cosine on [0, pi] agrees with std::cos within 4e-16") {
  double worst = 0;
  for (int i = 0; i <= 200000; ++i) {
    const double theta = M_PI * i / 200000.0;
    worst = std::max(worst, std::fabs(fast::cos_half_turn(theta) - std::cos(theta)));
  }
  // Near pi/2 the polynomial's terms cancel (3.2e-16 seen); the pulses use 0.5 (1 +- cos).
  CHECK(worst <= 4e-16);
  CHECK(fast::cos_half_turn(0.0) == 1.0);
  CHECK(fast::cos_half_turn(4.0) == std::cos(4.0));
}
