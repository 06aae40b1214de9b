// The circulation's inline cosine against the C++ standard library's (glibc's libm, documented
// within 1 ulp of the correctly rounded result).
#include <catch2/catch.hpp>

#include <cmath>

#include "generator/circulation/fast_cosine.hpp"

using namespace stethogen::gen;

TEST_CASE("fast cosine on [0, pi] agrees with std::cos within 4e-16", "[circulation]") {
  double worst = 0;
  for (int i = 0; i <= 200000; ++i) {
    const double theta = M_PI * i / 200000.0;
    worst = std::max(worst, std::fabs(fast::cos_half_turn(theta) - std::cos(theta)));
  }
  // Near pi/2 the polynomial's terms cancel; the pulses use 0.5 (1 +- cos), values in [0, 1].
  CHECK(worst <= 4e-16);
  CHECK(fast::cos_half_turn(0.0) == 1.0);
  CHECK(fast::cos_half_turn(M_PI) == -1.0);
  // Outside [0, pi] the library answers.
  CHECK(fast::cos_half_turn(4.0) == std::cos(4.0));
  CHECK(fast::cos_half_turn(-0.5) == std::cos(-0.5));
  CHECK(std::isnan(fast::cos_half_turn(NAN)));
}
