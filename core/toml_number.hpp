// The value of a TOML number node as a double, for the modules that read TOML. toml++'s
// value<double>() yields nothing for an integer beyond 2^53 (no exact double), so fields
// that accept integers for floating-point values convert here instead, rounding to nearest;
// the range checks that follow then refuse such values with the usual message.
#pragma once

#include <toml++/toml.h>

namespace stethogen {

// Precondition: node.is_number().
inline double toml_number(const toml::node& node) {
  if (const auto* i = node.as_integer()) return static_cast<double>(i->get());
  return node.as_floating_point()->get();
}

}  // namespace stethogen
