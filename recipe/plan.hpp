// The dataset plan: one SubjectSpec per record, numbered population by population. Each drawn
// quantity has its own counter-based sub-stream keyed by (seed, record index, quantity), so a
// record's plan is a pure function of the recipe and its index: independent of threads,
// shards, planning order and of which other quantities are configured.
#pragma once

#include <cstdint>
#include <string>

#include "core/subject.hpp"
#include "recipe/recipe.hpp"

namespace stethogen::recipe {

// Total number of records in the dataset.
std::uint64_t record_count(const Recipe& recipe);

// "r000042": zero-padded to at least 6 digits.
std::string record_id(std::uint64_t record_index);

// Index of the population holding record_index. Throws std::out_of_range past the end.
std::size_t population_of(const Recipe& recipe, std::uint64_t record_index);

// The subject of one record. Pure and deterministic. Throws std::out_of_range past the end.
SubjectSpec plan_record(const Recipe& recipe, std::uint64_t record_index);

}  // namespace stethogen::recipe
