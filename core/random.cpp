#include "core/random.hpp"

#include <Random123/philox.h>

#include <cassert>
#include <cmath>

#include "core/portable_math.hpp"
#include <limits>

namespace stethogen {

RandomStream::RandomStream(std::uint64_t seed, std::uint64_t record_index, std::uint32_t stream) {
  key_ = {static_cast<std::uint32_t>(seed), static_cast<std::uint32_t>(seed >> 32)};
  // Counter words: record index (64 bits), stream id, block number.
  counter_ = {static_cast<std::uint32_t>(record_index), static_cast<std::uint32_t>(record_index >> 32),
              stream, 0};
}

void RandomStream::refill() {
  r123::Philox4x32 rng;
  r123::Philox4x32::ctr_type c = {{counter_[0], counter_[1], counter_[2], counter_[3]}};
  r123::Philox4x32::key_type k = {{key_[0], key_[1]}};
  auto r = rng(c, k);
  for (int i = 0; i < 4; ++i) block_[i] = r[i];
  ++counter_[3];
  used_ = 0;
}

std::uint32_t RandomStream::next_u32() {
  if (used_ == 4) refill();
  return block_[used_++];
}

std::uint64_t RandomStream::next_u64() {
  std::uint64_t hi = next_u32();
  return (hi << 32) | next_u32();
}

double RandomStream::uniform() { return static_cast<double>(next_u64() >> 11) * 0x1.0p-53; }

double RandomStream::uniform(double lo, double hi) { return lo + (hi - lo) * uniform(); }

double RandomStream::normal() {
  // 1 - uniform() lies in (0, 1], so the logarithm is finite.
  double u1 = 1.0 - uniform();
  double u2 = uniform();
  return std::sqrt(-2.0 * portable::log(u1)) * portable::cos(2.0 * M_PI * u2);
}

double normal_cdf(double x) { return 0.5 * portable::erfc(-x / std::sqrt(2.0)); }

double normal_quantile(double p) {
  assert(p > 0.0 && p < 1.0);
  // Acklam (2003) coefficients; relative error about 1e-9 before refinement.
  static const double a[] = {-3.969683028665376e+01, 2.209460984245205e+02, -2.759285104469687e+02,
                             1.383577518672690e+02, -3.066479806614716e+01, 2.506628277459239e+00};
  static const double b[] = {-5.447609879822406e+01, 1.615858368580409e+02, -1.556989798598866e+02,
                             6.680131188771972e+01, -1.328068155288572e+01};
  static const double c[] = {-7.784894002430293e-03, -3.223964580411365e-01, -2.400758277161838e+00,
                             -2.549732539343734e+00, 4.374664141464968e+00, 2.938163982698783e+00};
  static const double d[] = {7.784695709041462e-03, 3.224671290700398e-01, 2.445134137142996e+00,
                             3.754408661907416e+00};
  const double p_low = 0.02425;
  double x;
  if (p < p_low) {
    double q = std::sqrt(-2 * portable::log(p));
    x = (((((c[0] * q + c[1]) * q + c[2]) * q + c[3]) * q + c[4]) * q + c[5]) /
        ((((d[0] * q + d[1]) * q + d[2]) * q + d[3]) * q + 1);
  } else if (p <= 1 - p_low) {
    double q = p - 0.5, r = q * q;
    x = (((((a[0] * r + a[1]) * r + a[2]) * r + a[3]) * r + a[4]) * r + a[5]) * q /
        (((((b[0] * r + b[1]) * r + b[2]) * r + b[3]) * r + b[4]) * r + 1);
  } else {
    double q = std::sqrt(-2 * portable::log(1 - p));
    x = -(((((c[0] * q + c[1]) * q + c[2]) * q + c[3]) * q + c[4]) * q + c[5]) /
        ((((d[0] * q + d[1]) * q + d[2]) * q + d[3]) * q + 1);
  }
  // One Halley step against the exact CDF.
  double e = normal_cdf(x) - p;
  double u = e * std::sqrt(2 * M_PI) * portable::exp(x * x / 2);
  return x - u / (1 + x * u / 2);
}

double RandomStream::truncated_normal(double mean, double sd, double lo, double hi) {
  assert(sd > 0 && lo <= hi);
  // Work in the upper-tail-safe orientation: flip so the interval is not deep in the right tail,
  // where CDF values round to 1 and lose all resolution.
  double a = (lo - mean) / sd, b = (hi - mean) / sd;
  bool flip = a > 0;
  if (flip) {
    double t = a;
    a = -b;
    b = -t;
  }
  double pa = normal_cdf(a), pb = normal_cdf(b);
  double u = uniform();
  double x;
  if (pb - pa < 1e-300) {
    x = a + (b - a) * u;  // interval carries no representable mass: uniform fallback
  } else {
    double p = pa + (pb - pa) * u;
    p = std::fmin(std::fmax(p, std::numeric_limits<double>::min()), 1.0 - 1e-16);
    x = std::fmin(std::fmax(normal_quantile(p), a), b);
  }
  if (flip) x = -x;
  return std::fmin(std::fmax(mean + sd * x, lo), hi);
}

std::size_t RandomStream::weighted_choice(const std::vector<double>& weights) {
  assert(!weights.empty());
  double total = 0;
  for (double w : weights) total += w;
  double target = uniform() * total;
  double acc = 0;
  for (std::size_t i = 0; i < weights.size(); ++i) {
    acc += weights[i];
    if (target < acc) return i;
  }
  // Rounding can leave target == total: return the last index with a positive weight.
  for (std::size_t i = weights.size(); i-- > 0;)
    if (weights[i] > 0) return i;
  return weights.size() - 1;
}

}  // namespace stethogen
