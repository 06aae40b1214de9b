// The activation pulses and the breath phase, evaluated the fast way (one logarithm for both
// Hill powers, lookups that start from the last index), against direct evaluations.
#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <random>

#include "circulation/hill_reference.hpp"
#include "generator/circulation/activation.hpp"
#include "generator/rhythm/respiration.hpp"

using namespace stethogen::gen;

namespace {

using test::double_hill_with_pow;

void check_against_pow(const ActivationPulse& p) {
  double peak = 0;
  for (int i = 0; i <= 4000; ++i) {
    const double t = p.onset_s + kHillCutoff * p.b_s * i / 4000.0;
    const double expected = double_hill_with_pow(p, t);
    peak = std::max(peak, expected);
    INFO("t - onset = " << t - p.onset_s << " s");
    CHECK(pulse_shape(p, t) == Approx(expected).epsilon(1e-12).margin(1e-15));
  }
  // The normalisation puts the peak at 1 (golden-section search to ~1e-8 in time).
  CHECK(peak <= 1.0 + 1e-12);
  CHECK(peak == Approx(1.0).epsilon(1e-6));
}

}  // namespace

TEST_CASE("double-Hill pulses agree with the formula evaluated by std::pow", "[circulation]") {
  ActivationTiming timing;
  SECTION("whole m2 (powers by squaring)") {
    REQUIRE(timing.hill_m2 == std::round(timing.hill_m2));
    const ActivationPlan plan = make_activation_plan({0.0, 0.8, 1.5}, timing, 0.16, 0.0);
    for (const auto chamber : {kLv, kRv})
      for (const ActivationPulse& p : plan.pulses[chamber]) check_against_pow(p);
  }
  SECTION("fractional m2, and after a stretch") {
    timing.hill_m2 = 17.35;
    timing.hill_m1 = 1.9;
    ActivationPlan plan = make_activation_plan({0.0, 0.9}, timing, 0.16, 0.0);
    stretch_pulse(plan.pulses[kLv][1], 1.13);
    for (const ActivationPulse& p : plan.pulses[kLv]) check_against_pow(p);
  }
}

TEST_CASE("atrial pulses are raised cosines of the given rise and fall", "[circulation]") {
  const ActivationPulse p = cosine_pulse(0.3, 0.09, 0.1);
  for (double u : {0.0, 0.01, 0.045, 0.09, 0.12, 0.17, 0.19, 0.2}) {
    // Raised-cosine rise to 1 at the rise time and fall back to 0 (common practice).
    const double expected = u <= 0.0   ? 0.0
                            : u < 0.09 ? 0.5 * (1.0 - std::cos(M_PI * u / 0.09))
                            : u < 0.19 ? 0.5 * (1.0 + std::cos(M_PI * (u - 0.09) / 0.1))
                                       : 0.0;
    CHECK(pulse_shape(p, 0.3 + u) == Approx(expected).margin(1e-14));
  }
}

TEST_CASE("all-chamber activations equal one-chamber lookups in any time order", "[circulation]") {
  std::vector<double> q;
  for (int k = 0; k < 40; ++k) q.push_back(0.4 + 0.75 * k + 0.05 * std::sin(k));
  ActivationPlan plan = make_activation_plan(q, ActivationTiming{}, 0.16, 0.02);
  REQUIRE(plan.atria_identical);
  ActivationCursor cursor;
  std::mt19937_64 rng(5);
  std::uniform_real_distribution<double> jump(-0.3, 0.6), anywhere(-1.0, 32.0);
  double t = -0.5;
  for (int i = 0; i < 5000; ++i) {
    t = i % 97 == 0 ? anywhere(rng) : t + jump(rng) * 0.01;  // mostly forward, sometimes anywhere
    std::array<double, 4> e{};
    plan.activations(t, cursor, e);
    for (int c = 0; c < 4; ++c) CHECK(e[c] == plan.activation(c, t));
    std::array<double, 4> again{};
    plan.activations(t, cursor, again);  // the same time again comes from the cursor
    CHECK(again == e);
  }
}

TEST_CASE("the breath phase from the last breath index equals the binary search", "[circulation]") {
  const std::vector<double> starts = {-3.0, 1.1, 5.0, 8.7, 13.2, 16.9};
  const Respiration r(starts, 4.0, 0.4, -4.0, 3.0);
  std::size_t hint = 0;
  std::mt19937_64 rng(9);
  std::uniform_real_distribution<double> anywhere(-8.0, 22.0);
  for (int i = 0; i < 4000; ++i) {
    const double t = i < 3000 ? -6.0 + i * 0.009 : anywhere(rng);
    const double ph = r.phase(t, hint);
    CHECK(ph == r.phase(t));
    // Inside the listed breaths: the elapsed fraction of the breath holding t (definition).
    if (t >= starts.front() && t < starts.back()) {
      const auto it = std::upper_bound(starts.begin(), starts.end(), t);
      CHECK(ph == Approx((t - *(it - 1)) / (*it - *(it - 1))).margin(1e-15));
    }
    CHECK(ph >= 0.0);
    CHECK(ph < 1.0);
  }
}
