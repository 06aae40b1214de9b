// The validation recipes and their records: where the recipe files live, and the synthesis of
// every record of a recipe (in parallel) together with the circulation result behind it.
#pragma once

#include <filesystem>
#include <string>
#include <vector>

#include "core/record.hpp"
#include "generator/hemodynamics.hpp"

namespace stethogen::validation {

// The recipe files validate runs, in validation/recipes/ of the source tree.
inline const std::vector<std::string> kValidationRecipes = {"rest.toml", "sti.toml", "exercise.toml", "failure.toml",
                                                            "snr.toml"};

// Finds validation/recipes: under $STETHOGEN_SOURCE_DIR if set, else in the nearest ancestor of
// the executable or of the working directory that holds it. Throws RuntimeFailure naming the
// places searched when none does.
std::filesystem::path locate_recipe_dir();

// One synthesised record and the circulation it came from (the same deterministic run).
struct Run {
  Record record;
  gen::CirculationResult circulation;
};

// Every record of every recipe, keyed by the recipe's file name (stem): runs[stem][i] is record i.
struct Cohort {
  std::vector<std::string> names;          // stems in kValidationRecipes order
  std::vector<std::vector<Run>> runs;      // same order
  const std::vector<Run>& of(const std::string& stem) const;
};

// Loads the recipes in dir and synthesises their records on `threads` workers (0 = all cores).
Cohort synthesize_cohort(const std::filesystem::path& dir, unsigned threads);

}  // namespace stethogen::validation
