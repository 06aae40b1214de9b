// Helpers shared by the recipe tests: paths from the test environment and small recipes.
#pragma once

#include <cstdlib>
#include <string>

#include "recipe/recipe.hpp"

namespace stethogen::recipe::test {

inline std::string source_dir() {
  const char* dir = std::getenv("STETHOGEN_SOURCE_DIR");
  return dir ? dir : ".";
}

inline std::string demo_path() { return source_dir() + "/recipes/demo.toml"; }
inline std::string bad_dir() { return source_dir() + "/tests/recipe/bad"; }

// A valid dataset header to which a test appends its populations.
inline const char* kHeader = "[dataset]\nname = \"t\"\nseed = 7\n";

inline Recipe parse(const std::string& body, const std::string& header = kHeader) {
  return parse_recipe(header + body, "test.toml");
}

}  // namespace stethogen::recipe::test
