// The plan's piecewise-polynomial Hill shape against the double-Hill formula evaluated by
// std::pow, over the whole used range s = u / tau2 in (0, 2), for the default exponents and
// the edges of their allowed ranges.
#include <catch2/catch.hpp>

#include <cmath>
#include <iomanip>

#include "circulation/hill_reference.hpp"
#include "generator/circulation/activation.hpp"

using namespace stethogen::gen;

namespace {

using test::double_hill_with_pow;

double worst_difference(const ActivationPlan& plan) {
  double worst = 0;
  for (const auto chamber : {kLv, kRv}) {
    const std::vector<ActivationPulse>& pulses = plan.pulses[chamber];
    for (std::size_t k = 0; k < pulses.size(); ++k) {
      const ActivationPulse& p = pulses[k];
      for (int i = 0; i <= 200'010; ++i) {
        const double t = p.onset_s + kHillCutoff * p.b_s * i / 200'000.0;
        if (k + 1 < pulses.size() && t >= pulses[k + 1].onset_s) break;
        // A plan's activation is the larger of the latest pulse and the one before (activation.hpp).
        const double expected = std::max(double_hill_with_pow(p, t), k > 0 ? double_hill_with_pow(pulses[k - 1], t) : 0.0);
        worst = std::max(worst, std::fabs(plan.activation(chamber, t) - expected));
      }
    }
  }
  return worst;
}

}  // namespace

TEST_CASE("the plan's Hill table matches the double-Hill formula by std::pow", "[circulation]") {
  ActivationTiming timing;
  SECTION("default exponents, one pulse stretched") {
    ActivationPlan plan = make_activation_plan({0.0, 0.8, 1.7}, timing, 0.16, 0.0);
    REQUIRE(plan.table() != nullptr);
    CHECK(plan.hill_table.build_error() < 1e-14);
    stretch_pulse(plan.pulses[kLv][1], 1.13);
    stretch_pulse(plan.pulses[kRv][1], 0.9);
    CHECK(worst_difference(plan) < 1e-14);
  }
  SECTION("edges of the allowed exponents and tau ratios") {
    for (const double m1 : {1.0, 5.0})
      for (const double m2 : {5.0, 17.35, 60.0})
        for (const auto& [tau1, tau2] : {std::pair{0.05, 0.9}, std::pair{0.269, 0.452}, std::pair{0.6, 0.6}}) {
          timing.hill_m1 = m1;
          timing.hill_m2 = m2;
          timing.hill_tau1_fraction = tau1;
          timing.hill_tau2_fraction = tau2;
          const ActivationPlan plan = make_activation_plan({0.0, 2.0}, timing, 0.16, 0.0);
          INFO(std::setprecision(3) << "m1 " << m1 << ", m2 " << m2 << ", tau1 " << tau1 << ", tau2 " << tau2 << ", table "
                     << (plan.table() ? "used" : "empty") << ", build error " << plan.hill_table.build_error());
          // Either the table meets its tolerance or it is left empty (the exact formula).
          const double worst = worst_difference(plan);
          INFO("worst " << worst);
          CHECK(worst < 2 * HillTable::kTolerance);
          // The published tau ratio with m2 up to 20 is always tabulated (steeper shapes may not be).
          if (m2 <= 20.0 && tau1 == 0.269) CHECK(plan.table() != nullptr);
        }
  }
}
