// Counter-based random streams (Random123 Philox4x32-10; Salmon et al. 2011, "Parallel random
// numbers: as easy as 1, 2, 3", SC'11) keyed by (dataset seed, record index, stream id).
// The distributions are written out here rather than taken from <random>, whose
// distributions differ between standard-library implementations.
#pragma once

#include <array>
#include <cstdint>
#include <vector>

namespace stethogen {

// Stream ids: one per consumer so that adding draws to one never shifts another.
// Noise processes take kNoiseBase + their process index.
enum class Stream : std::uint32_t {
  plan = 1,          // the subject's drawn parameters
  rhythm = 2,        // HRV and respiration irregularity
  physiology = 3,    // subject-to-subject variation of model parameters
  sources = 4,       // subject-to-subject variation of sound sources
  transmission = 5,  // per-subject transmission variation
  plan_parameters = 100,  // + the quantity's fixed slot (recipe/parameters.hpp): one sub-stream each
  noise_base = 1000,
};

inline constexpr std::uint32_t stream_id(Stream s, std::uint32_t offset = 0) {
  return static_cast<std::uint32_t>(s) + offset;
}

class RandomStream {
 public:
  RandomStream(std::uint64_t seed, std::uint64_t record_index, std::uint32_t stream);
  RandomStream(std::uint64_t seed, std::uint64_t record_index, Stream stream)
      : RandomStream(seed, record_index, static_cast<std::uint32_t>(stream)) {}

  std::uint32_t next_u32();
  std::uint64_t next_u64();
  // Uniform on [0, 1) with 53 random bits.
  double uniform();
  // Uniform on [lo, hi).
  double uniform(double lo, double hi);
  // Standard normal by the Box-Muller transform (Box & Muller 1958), one value per call.
  double normal();
  double normal(double mean, double sd) { return mean + sd * normal(); }
  // Normal(mean, sd) truncated to [lo, hi], by inversion of the CDF.
  double truncated_normal(double mean, double sd, double lo, double hi);
  // Index drawn with probability proportional to weights (all >= 0, sum > 0).
  std::size_t weighted_choice(const std::vector<double>& weights);

 private:
  void refill();

  std::array<std::uint32_t, 2> key_{};
  std::array<std::uint32_t, 4> counter_{};
  std::array<std::uint32_t, 4> block_{};
  int used_ = 4;
};

// Standard normal CDF and its inverse (Acklam's rational approximation refined by one
// Halley step against erfc), exposed for tests and for the truncated normal.
double normal_cdf(double x);
double normal_quantile(double p);

}  // namespace stethogen
