// Detection counts and timing-error statistics. Sensitivity and positive predictivity follow
// ANSI/AAMI EC57 (Se = TP / (TP + FN), +P = TP / (TP + FP)); F1 is their harmonic mean.
#pragma once

#include <cstddef>
#include <vector>

namespace stethogen::scoring {

struct Tally {
  std::size_t tp = 0, fp = 0, fn = 0;
  std::vector<double> errors_s;  // detected minus true time of each matched pair

  void add(const Tally& other);
  // NaN when undefined (no truth, no detections).
  double sensitivity() const;
  double ppv() const;
  double f1() const;
};

// Timing error of matched pairs, in milliseconds. NaN when there are no pairs.
struct TimingSummary {
  std::size_t n = 0;
  double mean_abs_ms = 0;    // mean absolute error
  double sd_ms = 0;          // sample SD of the signed error
  double median_abs_ms = 0;
  double p95_abs_ms = 0;     // 95th percentile of the absolute error
  double bias_ms = 0;        // mean signed error (positive: detections late)
};

TimingSummary summarize_timing(const std::vector<double>& errors_s);

// The q-quantile (q in [0, 1]) by linear interpolation between order statistics (the
// default method of numpy.percentile). NaN for an empty input.
double quantile(std::vector<double> values, double q);

}  // namespace stethogen::scoring
