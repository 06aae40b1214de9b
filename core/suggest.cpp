#include "core/suggest.hpp"

#include <algorithm>
#include <numeric>

namespace stethogen {

std::size_t edit_distance(std::string_view a, std::string_view b) {
  std::vector<std::size_t> prev(b.size() + 1), cur(b.size() + 1);
  std::iota(prev.begin(), prev.end(), 0);
  for (std::size_t i = 1; i <= a.size(); ++i) {
    cur[0] = i;
    for (std::size_t j = 1; j <= b.size(); ++j) {
      std::size_t substitute = prev[j - 1] + (a[i - 1] == b[j - 1] ? 0 : 1);
      cur[j] = std::min({prev[j] + 1, cur[j - 1] + 1, substitute});
    }
    std::swap(prev, cur);
  }
  return prev[b.size()];
}

std::string closest_match(std::string_view word, const std::vector<std::string>& candidates) {
  std::size_t limit = std::max<std::size_t>(2, word.size() / 3);
  std::string best;
  std::size_t best_distance = limit + 1;
  for (const auto& c : candidates) {
    std::size_t d = edit_distance(word, c);
    if (d < best_distance) {
      best_distance = d;
      best = c;
    }
  }
  return best;
}

std::string did_you_mean(std::string_view word, const std::vector<std::string>& candidates) {
  std::string best = closest_match(word, candidates);
  return best.empty() ? std::string() : " (did you mean '" + best + "'?)";
}

}  // namespace stethogen
