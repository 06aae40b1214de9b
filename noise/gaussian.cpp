#include "noise/gaussian.hpp"

#include <algorithm>
#include <cmath>
#include <cstdint>

#include "noise/splitmix.hpp"
#include "generator/transmission/portable_extra.hpp"

namespace stethogen::noise {

using detail::kSplitMixGamma;

namespace {

constexpr int kLayers = 256;  // half the slow-path visits of 128 layers

// Ziggurat layer tables (Marsaglia & Tsang 2000): the value of word r is j * w[i] with layer
// i = r mod 256 and j = r with those 8 bits cleared (signed); it lies in the layer's
// rectangle, and is accepted as is, when |j| < k[i].
struct ZigguratTables {
  std::uint32_t k[kLayers];
  double w[kLayers];
  double f[kLayers];
};

// r, the start of the tail, for 256 layers (from memory of common 256-layer implementations;
// Marsaglia & Tsang tabulate 128), and v = r f(r) + the tail area, the area of each layer
// (computed with scipy.special.erfc). Checked: the layers built from them close at the top
// (the last layer's area equals v) to 1e-12.
constexpr double kTailStart = 3.6541528853610088;
constexpr double kLayerArea = 4.928673233974658e-3;
constexpr double k2To31 = 2147483648.0;

ZigguratTables make_tables() {
  ZigguratTables t{};
  double d = kTailStart, prev = d;
  const double q = kLayerArea / portable::exp(-0.5 * d * d);
  t.k[0] = static_cast<std::uint32_t>((d / q) * k2To31);
  t.k[1] = 0;
  t.w[0] = q / k2To31;
  t.w[kLayers - 1] = d / k2To31;
  t.f[0] = 1.0;
  t.f[kLayers - 1] = portable::exp(-0.5 * d * d);
  for (int i = kLayers - 2; i >= 1; --i) {
    d = std::sqrt(-2.0 * portable::log(kLayerArea / d + portable::exp(-0.5 * d * d)));
    t.k[i + 1] = static_cast<std::uint32_t>((d / prev) * k2To31);
    prev = d;
    t.f[i] = portable::exp(-0.5 * d * d);
    t.w[i] = d / k2To31;
  }
  return t;
}

const ZigguratTables& tables() {
  static const ZigguratTables t = make_tables();
  return t;
}

std::uint64_t splitmix_output(std::uint64_t z) {
  z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9ull;
  z = (z ^ (z >> 27)) * 0x94d049bb133111ebull;
  return z ^ (z >> 31);
}

// SplitMix64 (Steele, Lea & Flood 2014, "Fast splittable pseudorandom number generators",
// OOPSLA): a fast bulk source seeded from the process's Philox stream. Its state after p steps
// is seed + p * gamma, so a block of outputs has no loop-carried dependency.
class BulkBits {
 public:
  BulkBits(std::uint64_t seed, bool avx2) : state_(seed), avx2_(avx2) {}
  // 2 * pairs words (two per output, low half first).
  void fill(std::uint32_t* words, std::size_t pairs) {
#ifdef STETHOGEN_HAVE_AVX2_KERNELS
    if (avx2_) {
      detail::splitmix_words_avx2(state_, words, pairs);
      state_ += pairs * kSplitMixGamma;
      return;
    }
#endif
    detail::splitmix_words_portable(state_, words, pairs);
    state_ += pairs * kSplitMixGamma;
  }
  std::uint32_t next_u32() {
    state_ += kSplitMixGamma;
    return static_cast<std::uint32_t>(splitmix_output(state_) >> 32);
  }
  double uniform() {
    state_ += kSplitMixGamma;
    return static_cast<double>(splitmix_output(state_) >> 11) * 0x1.0p-53;
  }

 private:
  std::uint64_t state_;
  bool avx2_;
};

// One 32-bit word per value: the low 8 bits pick the layer, the upper 24 bits (signed) are the
// abscissa, so index and value never share bits.
inline int layer_of(std::uint32_t r) { return static_cast<int>(r & (kLayers - 1)); }
inline std::int32_t abscissa_of(std::uint32_t r) {
  return static_cast<std::int32_t>(r & ~static_cast<std::uint32_t>(kLayers - 1));
}
inline std::uint32_t magnitude(std::int32_t j) {
  auto u = static_cast<std::uint32_t>(j);
  return j < 0 ? 0u - u : u;
}

// The rare slow path: the wedge of a layer or the tail beyond r (Marsaglia 1964 tail method).
double slow_path(BulkBits& bits, const ZigguratTables& t, std::int32_t j, int i) {
  while (true) {
    double x = j * t.w[i];
    if (i == 0) {
      double xt, y;
      do {
        xt = -portable::log(1.0 - bits.uniform()) / kTailStart;
        y = -portable::log(1.0 - bits.uniform());
      } while (y + y < xt * xt);
      return j > 0 ? kTailStart + xt : -kTailStart - xt;
    }
    if (t.f[i] + bits.uniform() * (t.f[i - 1] - t.f[i]) < portable::exp(-0.5 * x * x)) return x;
    const std::uint32_t r = bits.next_u32();
    i = layer_of(r);
    j = abscissa_of(r);
    if (magnitude(j) < t.k[i]) return j * t.w[i];
  }
}

// out[v] = j * w[i] for every word; the indices v outside their rectangle go to outside[], in
// increasing order; returns their count.
std::size_t rectangle_values_portable(const ZigguratTables& t, const std::uint32_t* words, float* out,
                                      std::uint16_t* outside, std::size_t count) {
  std::size_t n_outside = 0;
  for (std::size_t v = 0; v < count; ++v) {
    const int i = layer_of(words[v]);
    const std::int32_t j = abscissa_of(words[v]);
    out[v] = static_cast<float>(j * t.w[i]);
    outside[n_outside] = static_cast<std::uint16_t>(v);  // kept only if counted
    n_outside += magnitude(j) >= t.k[i];
  }
  return n_outside;
}

bool use_avx2(GaussianPath path) {
#ifdef STETHOGEN_HAVE_AVX2_KERNELS
  static const bool available = __builtin_cpu_supports("avx2");
  return path == GaussianPath::fastest && available;
#else
  return false;
#endif
}

}  // namespace

namespace detail {

void splitmix_words_portable(std::uint64_t base, std::uint32_t* words, std::size_t pairs) {
  for (std::size_t p = 0; p < pairs; ++p) {
    const std::uint64_t z = splitmix_output(base + (p + 1) * kSplitMixGamma);
    words[2 * p] = static_cast<std::uint32_t>(z);
    words[2 * p + 1] = static_cast<std::uint32_t>(z >> 32);
  }
}

}  // namespace detail

bool gaussian_uses_avx2() { return use_avx2(GaussianPath::fastest); }

// Blockwise: every value of a block takes the rectangle (fast) path without a branch, and the
// few (about 1 %) outside their layer's rectangle are redrawn afterwards, in order, from the
// bits that follow the block.
void fill_gaussian(RandomStream& rng, float* out, std::size_t n, GaussianPath path) {
  const ZigguratTables& t = tables();
  BulkBits bits(rng.next_u64(), use_avx2(path));
  constexpr std::size_t kBlock = 512;
  std::uint32_t words[kBlock];
  std::uint16_t outside[kBlock];
  for (std::size_t start = 0; start < n; start += kBlock) {
    const std::size_t count = std::min(kBlock, n - start);
    bits.fill(words, (count + 1) / 2);
    float* o = out + start;
    const std::size_t n_outside = rectangle_values_portable(t, words, o, outside, count);
    for (std::size_t k = 0; k < n_outside; ++k) {
      const std::uint32_t r = words[outside[k]];
      o[outside[k]] = static_cast<float>(slow_path(bits, t, abscissa_of(r), layer_of(r)));
    }
  }
}

}  // namespace stethogen::noise
