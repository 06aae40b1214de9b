// Robustness: mutated versions of the demo recipe either parse or are refused with an
// InputError carrying a location; nothing else escapes (no crash, no other exception type).
#include <catch2/catch.hpp>

#include <fstream>
#include <sstream>
#include <string>

#include "core/error.hpp"
#include "core/random.hpp"
#include "recipe/plan.hpp"
#include "recipe/recipe.hpp"
#include "recipe_test_util.hpp"

using namespace stethogen;

namespace {

std::string read(const std::string& path) {
  std::ifstream in(path, std::ios::binary);
  std::ostringstream s;
  s << in.rdbuf();
  return s.str();
}

// One random edit: delete, duplicate or replace a span, or splice in a troublesome token.
std::string mutate(const std::string& text, RandomStream& rng) {
  static const char* tokens[] = {"nan", "-inf", "1e308", "-1", "0", "\"\"", "[]", "{}", "[[", "=",
                                 "9223372036854775808", "\"x\"", "\n[[sweep]]\n", "\n[noise.q]\n",
                                 "{ uniform = [1, 1] }", "{ choice = [] }", "\xff\xfe"};
  std::string out = text;
  const std::size_t pos = rng.next_u32() % out.size();
  const std::size_t len = 1 + rng.next_u32() % 12;
  switch (rng.next_u32() % 4) {
    case 0: out.erase(pos, len); break;
    case 1: out.insert(pos, out.substr(pos, len)); break;
    case 2: out.replace(pos, len, tokens[rng.next_u32() % std::size(tokens)]); break;
    default: out.insert(pos, tokens[rng.next_u32() % std::size(tokens)]); break;
  }
  return out;
}

}  // namespace

TEST_CASE("mutated recipes parse or give a located InputError, never anything else", "[recipe]") {
  const std::string demo = read(recipe::test::demo_path());
  REQUIRE_FALSE(demo.empty());
  int accepted = 0, refused = 0;
  for (std::uint64_t i = 0; i < 1500; ++i) {
    RandomStream rng(2026, i, 0u);
    std::string text = mutate(demo, rng);
    if (rng.next_u32() % 2) text = mutate(text, rng);
    try {
      recipe::Recipe r = recipe::parse_recipe(text, "m.toml");
      const std::uint64_t n = recipe::record_count(r);
      REQUIRE(n > 0);
      (void)recipe::plan_record(r, n - 1);
      ++accepted;
    } catch (const InputError& e) {
      INFO(e.what());
      REQUIRE(std::string(e.what()).rfind("m.toml", 0) == 0);
      ++refused;
    }
  }
  // Both outcomes occur, so the mutations neither always break nor never touch the recipe.
  CHECK(accepted > 0);
  CHECK(refused > 0);
}
