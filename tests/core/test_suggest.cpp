#include <catch2/catch.hpp>

#include "core/suggest.hpp"

TEST_CASE("edit distance matches the textbook examples", "[suggest]") {
  // Classic worked example: kitten -> sitting needs 3 edits (Levenshtein distance).
  REQUIRE(stethogen::edit_distance("kitten", "sitting") == 3);
  REQUIRE(stethogen::edit_distance("", "abc") == 3);
  REQUIRE(stethogen::edit_distance("flaw", "lawn") == 2);
}

TEST_CASE("suggestions pick the closest key and stay quiet when nothing is close", "[suggest]") {
  std::vector<std::string> keys = {"sample_rate_hz", "seed", "sites", "sensor"};
  REQUIRE(stethogen::did_you_mean("sample_rate", keys) == " (did you mean 'sample_rate_hz'?)");
  REQUIRE(stethogen::did_you_mean("seeds", keys) == " (did you mean 'seed'?)");
  REQUIRE(stethogen::did_you_mean("completely_other", keys).empty());
}
