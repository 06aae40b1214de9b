#include "scoring/metrics.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

namespace stethogen::scoring {
namespace {
constexpr double kNaN = std::numeric_limits<double>::quiet_NaN();

double ratio(std::size_t num, std::size_t den) {
  return den == 0 ? kNaN : static_cast<double>(num) / static_cast<double>(den);
}
}  // namespace

void Tally::add(const Tally& other) {
  tp += other.tp;
  fp += other.fp;
  fn += other.fn;
  errors_s.insert(errors_s.end(), other.errors_s.begin(), other.errors_s.end());
}

double Tally::sensitivity() const { return ratio(tp, tp + fn); }
double Tally::ppv() const { return ratio(tp, tp + fp); }

double Tally::f1() const {
  // 2TP / (2TP + FP + FN): the harmonic mean of Se and +P, defined (0) when TP = 0.
  return ratio(2 * tp, 2 * tp + fp + fn);
}

double quantile(std::vector<double> values, double q) {
  if (values.empty()) return kNaN;
  std::sort(values.begin(), values.end());
  double position = q * static_cast<double>(values.size() - 1);
  auto below = static_cast<std::size_t>(std::floor(position));
  std::size_t above = std::min(below + 1, values.size() - 1);
  double fraction = position - static_cast<double>(below);
  return values[below] + fraction * (values[above] - values[below]);
}

TimingSummary summarize_timing(const std::vector<double>& errors_s) {
  TimingSummary s;
  s.n = errors_s.size();
  if (s.n == 0) {
    s.mean_abs_ms = s.sd_ms = s.median_abs_ms = s.p95_abs_ms = s.bias_ms = kNaN;
    return s;
  }
  std::vector<double> abs_ms;
  double sum = 0, sum_abs = 0;
  for (double e : errors_s) {
    sum += e * 1e3;
    sum_abs += std::abs(e) * 1e3;
    abs_ms.push_back(std::abs(e) * 1e3);
  }
  s.bias_ms = sum / static_cast<double>(s.n);
  s.mean_abs_ms = sum_abs / static_cast<double>(s.n);
  double ss = 0;
  for (double e : errors_s) ss += (e * 1e3 - s.bias_ms) * (e * 1e3 - s.bias_ms);
  s.sd_ms = s.n > 1 ? std::sqrt(ss / static_cast<double>(s.n - 1)) : kNaN;
  s.median_abs_ms = quantile(abs_ms, 0.5);
  s.p95_abs_ms = quantile(std::move(abs_ms), 0.95);
  return s;
}

}  // namespace stethogen::scoring
