// Why this is exact. On a line, two crossing pairs (t1 < t2 matched to d2 > d1) can always be
// uncrossed into (t1, d1), (t2, d2): both stay within the window and the summed absolute error
// does not grow (|x - y| is convex). So some optimal matching is non-crossing, and the
// non-crossing matchings of two sorted sequences are searched exactly by the dynamic programme
// of sequence alignment, ordering by (pairs, then total error). Points more than one window
// apart from everything before them start an independent component, which keeps the tables
// small. A component too large for a table (a detector firing many times per window for
// minutes) falls back to the earliest-first greedy, which still finds a maximum-cardinality
// matching for this interval graph (Glover 1967, "Maximum matching in a convex bipartite
// graph", Naval Research Logistics Quarterly 14:313) but not necessarily the least error.
#include "scoring/matching.hpp"

#include <cmath>
#include <cstdint>

namespace stethogen::scoring {
namespace {

constexpr std::size_t kMaxTableCells = 8'000'000;  // 8 MB of choices

struct Score {
  std::size_t pairs = 0;
  double error_s = 0;
  bool better_than(const Score& o) const { return pairs != o.pairs ? pairs > o.pairs : error_s < o.error_s; }
};

void match_greedy(std::span<const double> t, std::span<const double> d, std::size_t t0, std::size_t d0,
                  double tol, std::vector<MatchedPair>& out) {
  std::size_t i = 0, j = 0;
  while (i < t.size() && j < d.size()) {
    if (d[j] < t[i] - tol) ++j;
    else if (d[j] > t[i] + tol) ++i;
    else out.push_back({t0 + i++, d0 + j++});
  }
}

void match_exact(std::span<const double> t, std::span<const double> d, std::size_t t0, std::size_t d0,
                 double tol, std::vector<MatchedPair>& out) {
  const std::size_t n = t.size(), m = d.size();
  enum : std::uint8_t { kSkipTruth, kSkipDetection, kPair };
  std::vector<std::uint8_t> choice((n + 1) * (m + 1), kSkipDetection);
  std::vector<Score> prev(m + 1), cur(m + 1);
  for (std::size_t i = 1; i <= n; ++i) {
    cur[0] = prev[0];
    choice[i * (m + 1)] = kSkipTruth;
    for (std::size_t j = 1; j <= m; ++j) {
      Score best = prev[j];
      std::uint8_t how = kSkipTruth;
      if (cur[j - 1].better_than(best)) best = cur[j - 1], how = kSkipDetection;
      double error = std::abs(t[i - 1] - d[j - 1]);
      if (error <= tol) {
        Score paired{prev[j - 1].pairs + 1, prev[j - 1].error_s + error};
        if (paired.better_than(best)) best = paired, how = kPair;
      }
      cur[j] = best;
      choice[i * (m + 1) + j] = how;
    }
    std::swap(prev, cur);
  }
  std::vector<MatchedPair> reversed;
  for (std::size_t i = n, j = m; i > 0 && j > 0;) {
    std::uint8_t how = choice[i * (m + 1) + j];
    if (how == kPair) reversed.push_back({t0 + --i, d0 + --j});
    else if (how == kSkipTruth) --i;
    else --j;
  }
  out.insert(out.end(), reversed.rbegin(), reversed.rend());
}

}  // namespace

std::vector<MatchedPair> match_events(std::span<const double> truth, std::span<const double> detections,
                                      double tolerance_s) {
  std::vector<MatchedPair> out;
  std::size_t i = 0, j = 0;
  while (i < truth.size() && j < detections.size()) {
    // Grow one component: the next point must lie within a window of the last one taken.
    std::size_t i0 = i, j0 = j;
    double last = std::min(truth[i], detections[j]);
    while (true) {
      bool take_truth = i < truth.size() && (j >= detections.size() || truth[i] <= detections[j]);
      if (!take_truth && j >= detections.size()) break;
      double next = take_truth ? truth[i] : detections[j];
      if (next - last > tolerance_s) break;
      last = next;
      (take_truth ? i : j)++;
    }
    auto t = truth.subspan(i0, i - i0);
    auto d = detections.subspan(j0, j - j0);
    if (t.empty() || d.empty()) continue;  // nothing to pair in this component
    if ((t.size() + 1) * (d.size() + 1) <= kMaxTableCells) match_exact(t, d, i0, j0, tolerance_s, out);
    else match_greedy(t, d, i0, j0, tolerance_s, out);
  }
  return out;
}

}  // namespace stethogen::scoring
