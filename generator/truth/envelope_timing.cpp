#include "generator/truth/envelope_timing.hpp"

#include <algorithm>
#include <cmath>
#include <cstring>

namespace stethogen::gen {
namespace {

constexpr double kSquareMargin = 1e-14;
constexpr double kSmallestSafeSquare = 1e-290;

// The largest value (NaNs aside). Four running maxima keep the comparisons independent of each
// other (one running maximum is a chain of dependent compare-and-selects).
double largest_of(const double* x, std::size_t n) {
  double lane[4] = {x[0], x[0], x[0], x[0]};
  std::size_t i = 0;
  for (; i + 4 <= n; i += 4)
    for (std::size_t j = 0; j < 4; ++j) lane[j] = x[i + j] > lane[j] ? x[i + j] : lane[j];
  double largest = std::max(std::max(lane[0], lane[1]), std::max(lane[2], lane[3]));
  for (; i < n; ++i) largest = x[i] > largest ? x[i] : largest;
  return largest;
}

// The first index holding the largest value.
std::size_t first_argmax(const double* x, std::size_t n) {
  const double largest = largest_of(x, n);
  std::size_t k = 0;
  while (k + 1 < n && x[k] != largest) ++k;  // bounded: a NaN never equals
  return k;
}

// The measurement on envelope values env(i), i < n, whose first maximum is at k; below(i, t) is
// env(i) < t.
template <typename Envelope, typename Below>
SoundTiming measure(const Envelope& env, const Below& below, std::size_t n, std::size_t k, double t0_s,
                    double rate_hz, double threshold_fraction) {
  SoundTiming out;
  if (!(env(k) > 0)) return out;

  // Parabolic refinement of the maximum.
  double peak_pos = static_cast<double>(k);
  double peak_value = env(k);
  if (k > 0 && k + 1 < n) {
    double a = env(k - 1), b = env(k), c = env(k + 1);
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
    if (below(i - 1, threshold)) {
      double lo = env(i - 1), hi = env(i);
      onset_pos = static_cast<double>(i - 1) + (threshold - lo) / (hi - lo);
      break;
    }
  }
  double offset_pos = static_cast<double>(n - 1);
  for (std::size_t i = k; i + 1 < n; ++i) {
    if (below(i + 1, threshold)) {
      double lo = env(i + 1), hi = env(i);
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

}  // namespace

SoundTiming measure_envelope(const double* envelope, std::size_t n, double t0_s, double rate_hz,
                             double threshold_fraction) {
  if (n == 0) return {};
  auto env = [envelope](std::size_t i) { return envelope[i]; };
  auto below = [envelope](std::size_t i, double threshold) { return envelope[i] < threshold; };
  return measure(env, below, n, first_argmax(envelope, n), t0_s, rate_hz, threshold_fraction);
}

namespace {

// measure_power on power(i), i < n, whose largest value is largest (the first maximum of the
// power; see measure_power for why the root's first maximum can lie before it).
// Powers before first are zero and, unless largest is 0, need no search. at_least(from, to,
// level) is the first i in [from, to) with power(i) >= level, or to.
template <typename Power, typename AtLeast>
SoundTiming measure_power_at(const Power& power, const AtLeast& at_least, std::size_t n, std::size_t first,
                             double largest, double t0_s, double rate_hz, double threshold_fraction) {
  auto env = [&power](std::size_t i) { return std::sqrt(power(i)); };
  // The first sample at the largest power (>= is == there; a NaN is neither), else the last.
  std::size_t k = at_least(largest > 0 ? first : 0, n - 1, largest);
  // The first maximum of sqrt(power): sqrt is monotone, but distinct powers can round to the
  // same root, so an earlier sample whose root equals the largest root comes first. Such a
  // power lies above (the next smaller root)^2, with a margin for the rounding of the square.
  const double root = env(k);
  const double below = std::nextafter(root, 0.0);
  const double floor_power = below * below * (1.0 - 1e-15);
  for (std::size_t i = at_least(largest > 0 ? first : 0, k, floor_power); i < k; i = at_least(i + 1, k, floor_power))
    if (env(i) == root) {
      k = i;
      break;
    }
  // sqrt(power) < threshold without the root for all but a few samples: the rounded root is
  // monotone in the power, so powers clearly below threshold^2 are below and powers clearly
  // above are not (margin 1e-14, far above the roundings of the square and the root); only a
  // power within the margin takes the root. Same answers as comparing every root.
  auto is_below = [&power, env](std::size_t i, double threshold) {
    const double square = threshold * threshold;
    if (!(square >= kSmallestSafeSquare)) return env(i) < threshold;  // the margins would underflow
    const double p = power(i);
    if (p < square * (1.0 - kSquareMargin)) return true;
    if (p > square * (1.0 + kSquareMargin)) return false;
    return env(i) < threshold;
  };
  return measure(env, is_below, n, k, t0_s, rate_hz, threshold_fraction);
}

}  // namespace

SoundTiming measure_power(const double* power, std::size_t n, double t0_s, double rate_hz,
                          double threshold_fraction) {
  if (n == 0) return {};
  auto at = [power](std::size_t i) { return power[i]; };
  auto at_least = [power](std::size_t from, std::size_t to, double level) {
    while (from < to && !(power[from] >= level)) ++from;
    return from;
  };
  return measure_power_at(at, at_least, n, 0, largest_of(power, n), t0_s, rate_hz, threshold_fraction);
}

SoundTiming measure_analytic(const std::complex<double>* z, std::size_t lo, std::size_t n, double largest_power,
                             double t0_s, double rate_hz, double threshold_fraction) {
  if (n == 0) return {};
  lo = std::min(lo, n);
  auto at = [z, lo](std::size_t i) { return i < lo ? 0.0 : std::norm(z[i]); };
  // Two norms per vector (the same products and sum as std::norm).
  auto at_least = [z, lo](std::size_t from, std::size_t to, double level) {
    using Pair = double __attribute__((vector_size(16)));
    if (from >= to) return to;
    if (from < lo) {
      if (level <= 0) return from;  // the zeros before lo
      from = lo;
    }
    for (; from + 2 <= to; from += 2) {
      Pair a, b;
      std::memcpy(&a, z + from, sizeof a);
      std::memcpy(&b, z + from + 1, sizeof b);
      const Pair re = __builtin_shufflevector(a, b, 0, 2), im = __builtin_shufflevector(a, b, 1, 3);
      const Pair p = re * re + im * im;
      if (p[0] >= level) return from;
      if (p[1] >= level) return from + 1;
    }
    return from < to && std::norm(z[from]) >= level ? from : to;
  };
  return measure_power_at(at, at_least, n, lo, largest_power, t0_s, rate_hz, threshold_fraction);
}

}  // namespace stethogen::gen
