#include <catch2/catch.hpp>

#include <cmath>
#include <set>

#include "core/random.hpp"

using stethogen::RandomStream;
using stethogen::Stream;

TEST_CASE("streams are reproducible and independent by key", "[random]") {
  RandomStream a(42, 7, Stream::plan), b(42, 7, Stream::plan);
  for (int i = 0; i < 100; ++i) REQUIRE(a.next_u32() == b.next_u32());
  RandomStream c(42, 8, Stream::plan), d(43, 7, Stream::plan), e(42, 7, Stream::rhythm);
  RandomStream ref(42, 7, Stream::plan);
  int same_c = 0, same_d = 0, same_e = 0;
  for (int i = 0; i < 100; ++i) {
    auto r = ref.next_u32();
    same_c += r == c.next_u32();
    same_d += r == d.next_u32();
    same_e += r == e.next_u32();
  }
  REQUIRE(same_c + same_d + same_e == 0);
}

TEST_CASE("Philox4x32-10 matches the Random123 known-answer vector", "[random]") {
  // Known-answer test from Random123's kat_vectors: philox4x32 10 rounds, counter and key all
  // zero -> 6627e8d5 e169c58d bc57ac4c 9b00dbd8.
  RandomStream s(0, 0, 0u);
  REQUIRE(s.next_u32() == 0x6627e8d5u);
  REQUIRE(s.next_u32() == 0xe169c58du);
  REQUIRE(s.next_u32() == 0xbc57ac4cu);
  REQUIRE(s.next_u32() == 0x9b00dbd8u);
}

TEST_CASE("normal quantile inverts the CDF", "[random]") {
  // Reference quantiles of the standard normal (any statistics table; scipy.stats.norm.ppf).
  REQUIRE(stethogen::normal_quantile(0.975) == Approx(1.959963984540054).epsilon(1e-12));
  REQUIRE(stethogen::normal_quantile(0.5) == Approx(0.0).margin(1e-14));
  REQUIRE(stethogen::normal_quantile(1e-10) == Approx(-6.361340902404056).epsilon(1e-10));
}

TEST_CASE("distributions have the expected moments and bounds", "[random]") {
  RandomStream s(1, 0, Stream::plan);
  const int n = 200000;
  double sum = 0, sum2 = 0;
  for (int i = 0; i < n; ++i) {
    double x = s.normal();
    sum += x;
    sum2 += x * x;
  }
  // Standard error of the mean is 1/sqrt(n) ~ 0.0022; allow 5 of them.
  REQUIRE(std::abs(sum / n) < 0.011);
  REQUIRE(std::abs(sum2 / n - 1.0) < 0.02);

  double lo = 1.0, hi = 2.0, tsum = 0;
  for (int i = 0; i < n; ++i) {
    double x = s.truncated_normal(0.0, 1.0, lo, hi);
    REQUIRE(x >= lo);
    REQUIRE(x <= hi);
    tsum += x;
  }
  // Mean of N(0,1) truncated to [1,2]: (phi(1)-phi(2))/(Phi(2)-Phi(1)) = 1.3830 (closed form;
  // scipy.stats.truncnorm(1, 2).mean() gives 1.38303).
  REQUIRE(tsum / n == Approx(1.38303).margin(0.005));

  // Far tail: every draw stays inside the interval.
  for (int i = 0; i < 1000; ++i) {
    double x = s.truncated_normal(0.0, 1.0, 9.0, 10.0);
    REQUIRE(x >= 9.0);
    REQUIRE(x <= 10.0);
  }

  std::vector<double> w = {1, 0, 3};
  int counts[3] = {0, 0, 0};
  for (int i = 0; i < 40000; ++i) ++counts[s.weighted_choice(w)];
  REQUIRE(counts[1] == 0);
  REQUIRE(counts[2] / double(counts[0]) == Approx(3.0).epsilon(0.06));
}
