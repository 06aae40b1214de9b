// A check vocabulary for physical values: each helper throws InputError naming the quantity,
// its value and the violated constraint, so callers never format these messages by hand.
#pragma once

#include <cmath>
#include <string>

#include <fmt/format.h>

#include "core/error.hpp"

namespace stethogen {

inline void check_finite(const std::string& name, double value) {
  if (!std::isfinite(value)) throw InputError(fmt::format("{} = {}: must be a finite number", name, value));
}

inline void check_positive(const std::string& name, double value) {
  check_finite(name, value);
  if (!(value > 0)) throw InputError(fmt::format("{} = {}: must be > 0", name, value));
}

inline void check_non_negative(const std::string& name, double value) {
  check_finite(name, value);
  if (!(value >= 0)) throw InputError(fmt::format("{} = {}: must be >= 0", name, value));
}

// Inclusive range [lo, hi].
inline void check_in_range(const std::string& name, double value, double lo, double hi) {
  check_finite(name, value);
  if (value < lo || value > hi)
    throw InputError(fmt::format("{} = {}: must be within [{}, {}]", name, value, lo, hi));
}

}  // namespace stethogen
