// all_finite against the standard library's std::isfinite, on the binary32 values IEEE 754
// singles out: signed zeros, subnormals, the extremes, both infinities and NaNs with and without
// the quiet bit, payloads and signs.
#include <algorithm>
#include <cmath>
#include <cstdint>
#include <cstring>
#include <limits>
#include <vector>

#include <catch2/catch.hpp>

#include "core/check.hpp"

using stethogen::all_finite;

namespace {

float from_bits(std::uint32_t bits) {
  float f;
  std::memcpy(&f, &bits, sizeof f);
  return f;
}

bool reference_all_finite(const std::vector<float>& x) {
  return std::all_of(x.begin(), x.end(), [](float v) { return std::isfinite(v); });
}

}  // namespace

TEST_CASE("all_finite accepts every finite class of binary32", "[check]") {
  using L = std::numeric_limits<float>;
  const std::vector<float> finite = {0.0f, -0.0f, L::denorm_min(), -L::denorm_min(),
                                     from_bits(0x007fffffu) /* largest subnormal */,
                                     L::min(), L::max(), L::lowest(), 1.0f, -1.0f, L::epsilon()};
  REQUIRE(reference_all_finite(finite));
  CHECK(all_finite(finite.data(), finite.size()));
  CHECK(all_finite(nullptr, 0));
}

TEST_CASE("all_finite finds one infinity or NaN at any position and length", "[check]") {
  using L = std::numeric_limits<float>;
  // Quiet and signalling NaNs, the smallest and largest payloads, both signs.
  const std::vector<float> bad = {L::infinity(),          -L::infinity(),         L::quiet_NaN(),
                                  L::signaling_NaN(),     from_bits(0x7f800001u), from_bits(0x7fffffffu),
                                  from_bits(0xff800001u), from_bits(0xffffffffu)};
  for (float b : bad) {
    REQUIRE_FALSE(std::isfinite(b));
    // Lengths around the vector widths the compiler may use (4, 8, 16 floats) and their tails.
    for (std::size_t n : {1u, 2u, 3u, 7u, 8u, 9u, 15u, 16u, 17u, 33u, 67u}) {
      for (std::size_t at = 0; at < n; ++at) {
        std::vector<float> x(n, 0.25f);
        x[at] = b;
        REQUIRE(reference_all_finite(x) == false);
        CHECK_FALSE(all_finite(x.data(), n));
        // The same array read short of the bad value is finite.
        CHECK(all_finite(x.data(), at));
      }
    }
  }
}
