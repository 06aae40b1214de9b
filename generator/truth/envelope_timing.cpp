#include "generator/truth/envelope_timing.hpp"

#include <algorithm>

namespace stethogen::gen {

SoundTiming measure_envelope(const double* envelope, std::size_t n, double t0_s, double rate_hz,
                             double threshold_fraction) {
  SoundTiming out;
  if (n == 0) return out;
  // The first sample holding the maximum. Four running maxima keep the comparisons
  // independent of each other (one running maximum is a chain of dependent compare-and-selects).
  double lane[4] = {envelope[0], envelope[0], envelope[0], envelope[0]};
  std::size_t i = 0;
  for (; i + 4 <= n; i += 4)
    for (std::size_t j = 0; j < 4; ++j) lane[j] = envelope[i + j] > lane[j] ? envelope[i + j] : lane[j];
  double largest = std::max(std::max(lane[0], lane[1]), std::max(lane[2], lane[3]));
  for (; i < n; ++i) largest = envelope[i] > largest ? envelope[i] : largest;
  std::size_t k = 0;
  while (k + 1 < n && envelope[k] != largest) ++k;  // bounded: a NaN never equals
  if (!(envelope[k] > 0)) return out;

  // Parabolic refinement of the maximum.
  double peak_pos = static_cast<double>(k);
  double peak_value = envelope[k];
  if (k > 0 && k + 1 < n) {
    double a = envelope[k - 1], b = envelope[k], c = envelope[k + 1];
    double denom = a - 2.0 * b + c;
    if (denom < 0) {
      double d = 0.5 * (a - c) / denom;
      peak_pos += d;
      peak_value = b - 0.25 * (a - c) * d;
    }
  }
  double threshold = threshold_fraction * peak_value;

  // Walk outwards from the peak to the first samples below the threshold.
  double onset_pos = 0.0;
  for (std::size_t i = k; i > 0; --i) {
    if (envelope[i - 1] < threshold) {
      double lo = envelope[i - 1], hi = envelope[i];
      onset_pos = static_cast<double>(i - 1) + (threshold - lo) / (hi - lo);
      break;
    }
  }
  double offset_pos = static_cast<double>(n - 1);
  for (std::size_t i = k; i + 1 < n; ++i) {
    if (envelope[i + 1] < threshold) {
      double hi = envelope[i], lo = envelope[i + 1];
      offset_pos = static_cast<double>(i) + (hi - threshold) / (hi - lo);
      break;
    }
  }
  out.onset_s = t0_s + onset_pos / rate_hz;
  out.peak_s = t0_s + peak_pos / rate_hz;
  out.offset_s = t0_s + offset_pos / rate_hz;
  out.peak_envelope = peak_value;
  return out;
}

}  // namespace stethogen::gen
