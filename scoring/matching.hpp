// One-to-one matching of detected to true event times within a tolerance window.
#pragma once

#include <cstddef>
#include <span>
#include <vector>

namespace stethogen::scoring {

struct MatchedPair {
  std::size_t truth = 0;      // index into the truth times
  std::size_t detection = 0;  // index into the detected times
};

// A maximum-cardinality matching of truth[i] to detections[j] with |truth[i] - detections[j]|
// <= tolerance_s (the window of general event-evaluation libraries, e.g. mir_eval's
// match_events), and among those the one with the least total absolute timing error.
// Both inputs sorted ascending. Pairs are returned in increasing truth order.
std::vector<MatchedPair> match_events(std::span<const double> truth, std::span<const double> detections,
                                      double tolerance_s);

}  // namespace stethogen::scoring
