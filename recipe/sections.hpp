// The recipe's sections, each parsed from its TOML table into its plain struct and validated.
// Internal to recipe/ (includes toml++ through toml_fields.hpp).
#pragma once

#include <map>
#include <memory>
#include <string>
#include <vector>

#include "recipe/recipe.hpp"
#include "recipe/toml_fields.hpp"

namespace stethogen::recipe::detail {

using ProfileMap = std::map<std::string, std::shared_ptr<const noise::NoiseProfile>>;

// Upper bounds that keep a typo (an extra zero or three) from planning an absurd dataset.
inline constexpr std::int64_t kMaxPopulationCount = 1'000'000;
inline constexpr std::uint64_t kMaxRecords = 10'000'000;
inline constexpr std::size_t kMaxGridPoints = 10'000;

DatasetSpec parse_dataset(const Fields& f, const toml::table& doc);
ProfileMap parse_noise_profiles(const Fields& f, const toml::table& doc, int sample_rate_hz);
// [[population]] then every [[sweep]]'s grid points; names unique across both.
std::vector<PopulationSpec> parse_populations(const Fields& f, const toml::table& doc,
                                              const ProfileMap& profiles);

}  // namespace stethogen::recipe::detail
