// The recipe: a parsed and validated TOML description of a dataset (docs/recipe.md).
// Parsing fills plain structs with defaults and validates them in one step; every error is an
// InputError "file:line:column: key.path = value: what is allowed".
#pragma once

#include <array>
#include <cstdint>
#include <map>
#include <memory>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "core/types.hpp"
#include "recipe/compression.hpp"
#include "recipe/distribution.hpp"
#include "recipe/parameters.hpp"

namespace stethogen::noise {
struct NoiseProfile;  // noise/profile.hpp
}

namespace stethogen::recipe {

// The [dataset] table.
struct DatasetSpec {
  std::string name;
  std::uint64_t seed = 0;
  int sample_rate_hz = 4000;
  Distribution duration_s = Distribution::fixed_value(30.0);  // per-record length, [2, 600] s
  std::vector<Site> sites{kAllSites.begin(), kAllSites.end()};
  Sensor sensor = Sensor::acoustic_diaphragm;
  SampleFormat sample_format = SampleFormat::float32;
  std::string output;  // default "<name>.h5"
  FailurePolicy on_record_error = FailurePolicy::stop;
  Compression compression = Compression::fast;  // bundle filters (docs/bundle-format.md "Storage")
};

// Which noise profile a subject gets: one name, or a weighted choice of names. Empty: none.
struct NoiseChoice {
  std::vector<std::string> names;
  std::vector<double> weights;  // same length as names
};

// One population after sweep expansion.
struct PopulationSpec {
  std::string name;
  std::string sweep;  // name of the [[sweep]] it was expanded from, "" for [[population]]
  std::uint64_t count = 0;
  State state = State::rest;
  // Drawn parameters by Param; nullopt: the dataset's duration, or SubjectParams' default.
  // intensity is set exactly for exercise, severity exactly for the failure states.
  std::array<std::optional<Distribution>, kParamCount> params{};
  NoiseChoice noise;
};

struct Recipe {
  std::string path;        // as given to load_recipe, or the source name
  std::string text;        // verbatim
  std::string sha256_hex;  // of text
  DatasetSpec dataset;
  std::vector<PopulationSpec> populations;  // [[population]] in order, then each [[sweep]]'s grid points
  // Index of each population's first record (filled by parsing; lets the plan find a record's
  // population by binary search). Left empty, the plan counts from the start.
  std::vector<std::uint64_t> first_record;
  std::map<std::string, std::shared_ptr<const noise::NoiseProfile>> noise_profiles;
};

// Reads, parses and validates; a missing or unreadable file is an InputError too.
Recipe load_recipe(const std::string& path);
// source_name is used in messages ("file:line:column").
Recipe parse_recipe(std::string_view text, const std::string& source_name);

}  // namespace stethogen::recipe
