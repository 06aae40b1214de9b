#define CATCH_CONFIG_MAIN
#include <catch2/catch.hpp>

#include <cstdlib>

// Defaults for the test environment (see tests/CMakeLists.txt); a value set by the caller wins.
namespace {
const bool kTestEnvironment = [] {
  setenv("STETHOGEN_SOURCE_DIR", STETHOGEN_TEST_SOURCE_DIR, 0);
  setenv("STETHOGEN_BINARY", STETHOGEN_TEST_BINARY, 0);
  setenv("STETHOGEN_PYTHON", STETHOGEN_TEST_PYTHON, 0);
  return true;
}();
}  // namespace
