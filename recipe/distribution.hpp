// A parameter's distribution across the subjects of a population: fixed, uniform, truncated
// normal or weighted choice. Its support is checked against the parameter's range on parsing.
#pragma once

#include <vector>

#include "core/random.hpp"

namespace stethogen::recipe {

struct Distribution {
  enum class Kind { fixed, uniform, normal, choice };
  Kind kind = Kind::fixed;
  double value = 0;                 // fixed
  double lo = 0, hi = 0;            // uniform bounds; truncation bounds of normal
  double mean = 0, sd = 0;          // normal, before truncation
  std::vector<double> values;       // choice
  std::vector<double> weights;      // choice, same length, >= 0 with positive sum

  static Distribution fixed_value(double v);

  // One draw; a fixed value consumes nothing.
  double draw(RandomStream& rng) const;
  // Smallest and largest value a draw can take.
  double support_min() const;
  double support_max() const;
};

}  // namespace stethogen::recipe
