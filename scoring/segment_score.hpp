// Scoring a segmentation against the truth's per-sample states: per-sample accuracy and a
// confusion matrix over the labels 0-4 (0 = unlabelled), and boundary errors: the distance from
// each true state boundary to the nearest detected boundary of the same transition.
#pragma once

#include <array>
#include <cstdint>
#include <map>
#include <string>
#include <vector>

#include "scoring/breakdown.hpp"
#include "scoring/detections.hpp"
#include "scoring/metrics.hpp"
#include "scoring/truth.hpp"

namespace stethogen::scoring {

// confusion[true label][detected label], label values as in the bundle (0 unlabelled .. 4 diastole).
using Confusion = std::array<std::array<std::uint64_t, 5>, 5>;

// Fraction of truly labelled samples (1-4) given their true label; NaN if none.
double accuracy(const Confusion& c);

// The four transitions of the cardiac cycle: S1->systole, systole->S2, S2->diastole, diastole->S1.
inline constexpr std::array<const char*, 4> kTransitions = {"S1>systole", "systole>S2", "S2>diastole",
                                                            "diastole>S1"};

struct BoundaryErrors {
  std::vector<double> errors_s;  // nearest detected boundary minus true boundary
  std::size_t unmatched = 0;     // true boundaries with no detected boundary of their kind
};

struct SegmentScore {
  double tolerance_s = 0;                 // reported: share of boundaries within it
  std::vector<std::string> sites;         // sites the segmentation labels
  std::map<GroupKey, Confusion> groups;
  std::array<BoundaryErrors, 4> boundaries;
  std::vector<std::string> missing_records;
  std::size_t records = 0;
};

SegmentScore score_segments(const TruthSource& truth, const Detections& detections, double tolerance_s);

}  // namespace stethogen::scoring
