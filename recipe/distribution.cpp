#include "recipe/distribution.hpp"

#include <algorithm>
#include <cassert>

namespace stethogen::recipe {

Distribution Distribution::fixed_value(double v) {
  Distribution d;
  d.value = v;
  return d;
}

double Distribution::draw(RandomStream& rng) const {
  switch (kind) {
    case Kind::fixed: return value;
    case Kind::uniform: return rng.uniform(lo, hi);
    case Kind::normal: return rng.truncated_normal(mean, sd, lo, hi);
    case Kind::choice: return values[rng.weighted_choice(weights)];
  }
  assert(false && "unknown distribution kind");
  return value;
}

double Distribution::support_min() const {
  switch (kind) {
    case Kind::fixed: return value;
    case Kind::uniform:
    case Kind::normal: return lo;
    case Kind::choice: return *std::min_element(values.begin(), values.end());
  }
  return value;
}

double Distribution::support_max() const {
  switch (kind) {
    case Kind::fixed: return value;
    case Kind::uniform:
    case Kind::normal: return hi;
    case Kind::choice: return *std::max_element(values.begin(), values.end());
  }
  return value;
}

}  // namespace stethogen::recipe
