// libFuzzer target: the recipe parser on arbitrary text. A recipe is either accepted or refused
// with an InputError; any other exception, a crash, a hang or a leak is a finding.
#include <cstddef>
#include <cstdint>
#include <string_view>

#include "core/error.hpp"
#include "recipe/recipe.hpp"

extern "C" int LLVMFuzzerTestOneInput(const std::uint8_t* data, std::size_t size) {
  const std::string_view text(reinterpret_cast<const char*>(data), size);
  try {
    const stethogen::recipe::Recipe recipe = stethogen::recipe::parse_recipe(text, "fuzz.toml");
    // Touch what the plan reads, so a half-filled recipe would show up under ASan.
    std::uint64_t records = 0;
    for (const auto& p : recipe.populations) records += p.count;
    if (recipe.first_record.size() > recipe.populations.size()) __builtin_trap();
    (void)records;
  } catch (const stethogen::InputError&) {
    // the expected way to refuse bad input
  }
  return 0;
}
