// "Did you mean" suggestions for unknown keys and names.
#pragma once

#include <string>
#include <string_view>
#include <vector>

namespace stethogen {

// Levenshtein edit distance (Levenshtein 1966), case-sensitive.
std::size_t edit_distance(std::string_view a, std::string_view b);

// The closest candidate within a distance of max(2, |word| / 3), or "" if none is close.
std::string closest_match(std::string_view word, const std::vector<std::string>& candidates);

// " (did you mean 'x'?)" or "" — ready to append to an error message.
std::string did_you_mean(std::string_view word, const std::vector<std::string>& candidates);

}  // namespace stethogen
