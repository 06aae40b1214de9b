#include "noise/gaussian.hpp"

#include <array>
#include <cmath>
#include <cstdint>

namespace stethogen::noise {

namespace {

constexpr int kLayers = 128;
constexpr double kTailStart = 3.442619855899;       // r: start of the tail (Marsaglia & Tsang)
constexpr double kLayerArea = 9.91256303526217e-3;  // v: area of each layer
constexpr double k2To31 = 2147483648.0;

// Layer tables for |x| drawn from a signed 32-bit integer j: accept j * w[i] when |j| < k[i].
struct Tables {
  std::array<std::uint32_t, kLayers> k{};
  std::array<double, kLayers> w{};
  std::array<double, kLayers> f{};

  Tables() {
    double d = kTailStart, t = d;
    const double q = kLayerArea / std::exp(-0.5 * d * d);
    k[0] = static_cast<std::uint32_t>((d / q) * k2To31);
    k[1] = 0;
    w[0] = q / k2To31;
    w[kLayers - 1] = d / k2To31;
    f[0] = 1.0;
    f[kLayers - 1] = std::exp(-0.5 * d * d);
    for (int i = kLayers - 2; i >= 1; --i) {
      d = std::sqrt(-2.0 * std::log(kLayerArea / d + std::exp(-0.5 * d * d)));
      k[i + 1] = static_cast<std::uint32_t>((d / t) * k2To31);
      t = d;
      f[i] = std::exp(-0.5 * d * d);
      w[i] = d / k2To31;
    }
  }
};

const Tables& tables() {
  static const Tables t;
  return t;
}

// SplitMix64 (Steele, Lea & Flood 2014, "Fast splittable pseudorandom number generators",
// OOPSLA): a fast bulk source seeded from the process's Philox stream, two words per step.
class BulkBits {
 public:
  explicit BulkBits(std::uint64_t seed) : state_(seed) {}
  std::uint32_t next_u32() {
    if (have_low_) {
      have_low_ = false;
      return static_cast<std::uint32_t>(word_);
    }
    word_ = next_u64();
    have_low_ = true;
    return static_cast<std::uint32_t>(word_ >> 32);
  }
  double uniform() { return static_cast<double>(next_u64() >> 11) * 0x1.0p-53; }

 private:
  std::uint64_t next_u64() {
    std::uint64_t z = (state_ += 0x9e3779b97f4a7c15ull);
    z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ull;
    z = (z ^ (z >> 27)) * 0x94d049bb133111ebull;
    return z ^ (z >> 31);
  }
  std::uint64_t state_;
  std::uint64_t word_ = 0;
  bool have_low_ = false;
};

// One 32-bit word per value: the low 7 bits pick the layer, the upper 25 bits (signed) are the
// abscissa, so index and value never share bits.
inline void split(std::uint32_t r, int& i, std::int32_t& j) {
  i = static_cast<int>(r & (kLayers - 1));
  j = static_cast<std::int32_t>(r & ~static_cast<std::uint32_t>(kLayers - 1));
}

inline bool in_rectangle(const Tables& t, std::int32_t j, int i) {
  return static_cast<std::uint32_t>(std::abs(static_cast<std::int64_t>(j))) < t.k[i];
}

// The rare slow path: the wedge of a layer or the tail beyond r (Marsaglia 1964 tail method).
double slow_path(BulkBits& bits, const Tables& t, std::int32_t j, int i) {
  while (true) {
    double x = j * t.w[i];
    if (i == 0) {
      double xt, y;
      do {
        xt = -std::log(1.0 - bits.uniform()) / kTailStart;
        y = -std::log(1.0 - bits.uniform());
      } while (y + y < xt * xt);
      return j > 0 ? kTailStart + xt : -kTailStart - xt;
    }
    if (t.f[i] + bits.uniform() * (t.f[i - 1] - t.f[i]) < std::exp(-0.5 * x * x)) return x;
    split(bits.next_u32(), i, j);
    if (in_rectangle(t, j, i)) return j * t.w[i];
  }
}

}  // namespace

void fill_gaussian(RandomStream& rng, float* out, std::size_t n) {
  const Tables& t = tables();
  BulkBits bits(rng.next_u64());
  for (std::size_t s = 0; s < n; ++s) {
    int i;
    std::int32_t j;
    split(bits.next_u32(), i, j);
    out[s] = static_cast<float>(in_rectangle(t, j, i) ? j * t.w[i] : slow_path(bits, t, j, i));
  }
}

}  // namespace stethogen::noise
