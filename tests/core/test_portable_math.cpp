// portable:: functions against the C library's long double functions (std::exp, std::log,
// std::pow, std::sin, std::cos on long double: x87 code with a 64-bit significand, no FMA
// variants), rounded to double, over the ranges the engine and the noise use; special values as
// C99 Annex F prescribes for the library functions.
#include <catch2/catch.hpp>

#include <cmath>
#include <cstdint>
#include <cstring>
#include <limits>
#include <random>

#include "core/portable_math.hpp"

namespace portable = stethogen::portable;

namespace {

std::int64_t ordered(double x) {
  std::int64_t i;
  std::memcpy(&i, &x, sizeof i);
  return i < 0 ? std::numeric_limits<std::int64_t>::min() - i : i;
}
std::int64_t ulps_apart(double a, double b) {
  const std::int64_t d = ordered(a) - ordered(b);
  return d < 0 ? -d : d;
}

template <class F, class R>
std::int64_t worst_ulps(F f, R reference, double lo, double hi, int count, std::uint64_t seed) {
  std::mt19937_64 rng(seed);
  std::uniform_real_distribution<double> uniform(lo, hi);
  std::int64_t worst = 0;
  for (int i = 0; i < count; ++i) {
    const double x = uniform(rng);
    const std::int64_t d = ulps_apart(f(x), static_cast<double>(reference(static_cast<long double>(x))));
    if (d > worst) worst = d;
  }
  return worst;
}

constexpr double kInf = std::numeric_limits<double>::infinity();

}  // namespace

TEST_CASE("portable exp is within 1 ulp of the long double exp", "[portable_math]") {
  auto f = [](double x) { return portable::exp(x); };
  auto ref = [](long double x) { return std::exp(x); };
  // Reference: C library expl (64-bit significand), rounded to double.
  CHECK(worst_ulps(f, ref, -40.0, 40.0, 200000, 1) <= 1);
  CHECK(worst_ulps(f, ref, -708.0, 709.7, 100000, 2) <= 1);
  CHECK(worst_ulps(f, ref, -1e-6, 1e-6, 20000, 3) <= 1);
  CHECK(worst_ulps(f, ref, -745.0, -708.5, 20000, 4) <= 1);  // subnormal results
  CHECK(portable::exp(0.0) == 1.0);
  CHECK(portable::exp(710.0) == kInf);
  CHECK(portable::exp(-kInf) == 0.0);
  CHECK(portable::exp(-746.0) == 0.0);
  CHECK(std::isnan(portable::exp(std::nan(""))));
}

TEST_CASE("portable log is within 1 ulp of the long double log", "[portable_math]") {
  auto f = [](double x) { return portable::log(x); };
  auto ref = [](long double x) { return std::log(x); };
  // Reference: C library logl, rounded to double.
  CHECK(worst_ulps(f, ref, 1e-300, 1e-290, 20000, 5) <= 1);
  CHECK(worst_ulps(f, ref, 1e-9, 1.0, 100000, 6) <= 1);
  CHECK(worst_ulps(f, ref, 0.5, 2.0, 200000, 7) <= 1);
  CHECK(worst_ulps(f, ref, 1.0, 1e6, 100000, 8) <= 1);
  CHECK(worst_ulps(f, ref, 0.999999, 1.000001, 20000, 9) <= 1);
  CHECK(worst_ulps(f, ref, 1e-320, 1e-310, 20000, 10) <= 1);  // subnormal arguments
  CHECK(portable::log(1.0) == 0.0);
  CHECK(portable::log(0.0) == -kInf);
  CHECK(portable::log(kInf) == kInf);
  CHECK(std::isnan(portable::log(-1.0)));
  CHECK(std::isnan(portable::log(std::nan(""))));
}

TEST_CASE("portable pow is within a few ulp of the long double pow", "[portable_math]") {
  std::mt19937_64 rng(11);
  std::uniform_real_distribution<double> base(0.01, 3.0), exponent(-8.0, 8.0);
  std::int64_t worst = 0;
  for (int i = 0; i < 100000; ++i) {
    const double x = base(rng), y = exponent(rng);
    // Reference: C library powl, rounded to double.
    const std::int64_t d = ulps_apart(portable::pow(x, y), static_cast<double>(std::pow(static_cast<long double>(x), static_cast<long double>(y))));
    // Accuracy stated in the header: at most 3 + 2 |y ln x| ulp.
    REQUIRE(d <= 3 + static_cast<std::int64_t>(2.0 * std::fabs(y * std::log(x))));
    if (d > worst) worst = d;
  }
  CHECK(worst <= 40);
  CHECK(ulps_apart(portable::pow(2.0, 10.0), 1024.0) <= 2);
  CHECK(ulps_apart(portable::pow(-2.0, 3.0), -8.0) <= 2);
  CHECK(portable::pow(0.0, 2.0) == 0.0);
  CHECK(portable::pow(0.0, -1.0) == kInf);
  CHECK(portable::pow(5.0, 0.0) == 1.0);
  CHECK(std::isnan(portable::pow(-2.0, 0.5)));
}

TEST_CASE("portable sin and cos are within 1 ulp of the long double ones", "[portable_math]") {
  auto s = [](double x) { return portable::sin(x); };
  auto c = [](double x) { return portable::cos(x); };
  auto sref = [](long double x) { return std::sin(x); };
  auto cref = [](long double x) { return std::cos(x); };
  // Reference: C library sinl / cosl, rounded to double; away from the zeros, where 1 ulp of a
  // tiny result is below the reduction's absolute accuracy.
  for (auto [lo, hi] : {std::pair{-7.0, 7.0}, std::pair{0.0, 1e4}, std::pair{1e5, 7e5}, std::pair{9e5, 1e8}}) {
    std::mt19937_64 rng(static_cast<std::uint64_t>(lo + hi));
    std::uniform_real_distribution<double> uniform(lo, hi);
    std::int64_t worst_sin = 0, worst_cos = 0;
    double worst_abs = 0;
    for (int i = 0; i < 100000; ++i) {
      const double x = uniform(rng);
      const double rs = static_cast<double>(sref(x)), rc = static_cast<double>(cref(x));
      if (std::fabs(rs) > 1e-3) worst_sin = std::max(worst_sin, ulps_apart(s(x), rs));
      if (std::fabs(rc) > 1e-3) worst_cos = std::max(worst_cos, ulps_apart(c(x), rc));
      worst_abs = std::max({worst_abs, std::fabs(s(x) - rs), std::fabs(c(x) - rc)});
    }
    INFO("range " << lo << " .. " << hi);
    CHECK(worst_sin <= 1);
    CHECK(worst_cos <= 1);
    CHECK(worst_abs <= 2.3e-16);
  }
  CHECK(portable::sin(0.0) == 0.0);
  CHECK(std::signbit(portable::sin(-0.0)));
  CHECK(portable::cos(0.0) == 1.0);
  CHECK(std::isnan(portable::sin(kInf)));
  CHECK(std::isnan(portable::cos(std::nan(""))));
}

TEST_CASE("portable erfc is within 1.5e-15 relative of the long double erfc", "[portable_math]") {
  std::mt19937_64 rng(13);
  std::uniform_real_distribution<double> uniform(-6.0, 26.0);
  double worst = 0;
  for (int i = 0; i < 100000; ++i) {
    const double x = uniform(rng);
    // Reference: C library erfcl (64-bit significand).
    const long double r = std::erfc(static_cast<long double>(x));
    worst = std::max(worst, static_cast<double>(std::fabs((portable::erfc(x) - r) / r)));
  }
  CHECK(worst < 1.5e-15);
  CHECK(portable::erfc(0.0) == 1.0);
  CHECK(portable::erfc(30.0) == 0.0);
  CHECK(portable::erfc(-30.0) == 2.0);
  CHECK(std::isnan(portable::erfc(std::nan(""))));
}

TEST_CASE("portable float functions round the double ones", "[portable_math]") {
  // Reference: C library expf/logf/sinf/cosf, which are within 1 float ulp of the true value.
  for (float x : {-20.5f, -1.25f, 0.1f, 3.0f, 60.0f}) {
    CHECK(std::fabs(portable::expf(x) - std::exp(x)) <= 2.0f * std::nextafter(std::exp(x), kInf) - 2.0f * std::exp(x));
    CHECK(std::fabs(portable::sinf(x) - std::sin(x)) <= 1.2e-7f);
    CHECK(std::fabs(portable::cosf(x) - std::cos(x)) <= 1.2e-7f);
  }
  for (float x : {1e-30f, 0.01f, 1.0f, 7.5f, 1e20f})
    CHECK(std::fabs(portable::logf(x) - std::log(x)) <= 4e-6f * std::fabs(std::log(x)) + 1e-7f);
}
