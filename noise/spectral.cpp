#include "noise/spectral.hpp"

#include <algorithm>
#include <cmath>
#include <map>
#include <mutex>

#include <fftw3.h>

namespace stethogen::noise {

namespace {

// FFTW's planner is not thread-safe, executing a plan on new arrays is: plans are made once
// per length under a lock and kept for the life of the process. FFTW_ESTIMATE: measuring a
// plan for a record length costs seconds and gains about 0.1 ms per transform. FFTW_NO_SIMD:
// FFTW picks SSE2/AVX/AVX2 codelets from the CPU, and they round differently; the scalar
// codelets give the same samples on every x86-64 machine (DESIGN.md "Determinism").
struct PlanCache {
  std::mutex mutex;
  std::map<std::size_t, fftwf_plan> plans;
  ~PlanCache() {
    for (auto& [n, plan] : plans) fftwf_destroy_plan(plan);
  }
};

fftwf_plan c2r_plan(std::size_t n) {
  static PlanCache cache;
  std::lock_guard lock(cache.mutex);
  auto& plans = cache.plans;
  auto it = plans.find(n);
  if (it != plans.end()) return it->second;
  fftwf_complex* in = fftwf_alloc_complex(n / 2 + 1);
  float* out = fftwf_alloc_real(n);
  fftwf_plan plan =
      fftwf_plan_dft_c2r_1d(static_cast<int>(n), in, out, FFTW_ESTIMATE | FFTW_DESTROY_INPUT | FFTW_NO_SIMD);
  fftwf_free(in);
  fftwf_free(out);
  plans.emplace(n, plan);
  return plan;
}

// Responses by (shape, n, rate). A dataset uses a handful; past kMaxResponses (records of
// many lengths) the cache starts afresh rather than grow.
constexpr std::size_t kMaxResponses = 32;
struct ResponseCache {
  std::mutex mutex;
  std::map<std::string, std::shared_ptr<const std::vector<float>>> by_key;
};

}  // namespace

void FftwFree::operator()(void* p) const { fftwf_free(p); }

std::vector<float> amplitude_response(std::size_t n, double sample_rate_hz,
                                      const std::function<double(double frequency_hz)>& amplitude) {
  std::vector<float> a(n / 2 + 1, 0.0f);
  const double bin_hz = sample_rate_hz / static_cast<double>(n);
  for (std::size_t k = 1; k < a.size(); ++k) a[k] = static_cast<float>(amplitude(static_cast<double>(k) * bin_hz));
  return a;
}

std::shared_ptr<const std::vector<float>> cached_response(const std::string& shape, std::size_t n,
                                                          double sample_rate_hz,
                                                          const std::function<double(double frequency_hz)>& amplitude) {
  static ResponseCache cache;
  std::string key = shape + " n=" + std::to_string(n) + " rate=" + std::to_string(sample_rate_hz);
  {
    std::lock_guard lock(cache.mutex);
    auto it = cache.by_key.find(key);
    if (it != cache.by_key.end()) return it->second;
  }
  // Computed outside the lock; two threads may both compute the same (identical) response.
  auto response = std::make_shared<const std::vector<float>>(amplitude_response(n, sample_rate_hz, amplitude));
  std::lock_guard lock(cache.mutex);
  if (cache.by_key.size() >= kMaxResponses) cache.by_key.clear();
  return cache.by_key.emplace(std::move(key), std::move(response)).first->second;
}

ShapedNoise shaped_gaussian(RandomStream& rng, const std::vector<float>& response, std::size_t n) {
  ShapedNoise out;
  out.samples.reset(fftwf_alloc_real(std::max<std::size_t>(n, 1)));
  if (n < 2) {
    out.samples.get()[0] = 0;
    return out;
  }
  const std::size_t bins = n / 2 + 1;
  std::unique_ptr<fftwf_complex, FftwFree> spectrum(fftwf_alloc_complex(bins));
  // Real and imaginary parts of bin k are draws 2k and 2k + 1, drawn straight into the spectrum.
  float* s = reinterpret_cast<float*>(spectrum.get());
  fill_gaussian(rng, s, 2 * bins);
  s[0] = s[1] = 0;                            // no DC
  if (n % 2 == 0) s[2 * (bins - 1) + 1] = 0;  // the Nyquist bin of an even length is real
  for (std::size_t k = 1; k < bins; ++k) {
    s[2 * k] *= response[k];
    s[2 * k + 1] *= response[k];
  }
  // Parseval for the unnormalised inverse real transform: sum x^2 = (2 sum_{0<k<n/2} |X_k|^2
  // + |X_n/2|^2) / n, the Nyquist bin of an even length counted once. To about 1e-6: the level
  // is set again from the final sum, where the SNR is computed exactly.
  double half_energy = rough_mean_power(s, 2 * bins) * static_cast<double>(2 * bins);
  if (n % 2 == 0) half_energy -= 0.5 * static_cast<double>(s[2 * (bins - 1)]) * s[2 * (bins - 1)];
  out.mean_power = 2 * half_energy / (static_cast<double>(n) * static_cast<double>(n));
  fftwf_execute_dft_c2r(c2r_plan(n), spectrum.get(), out.samples.get());  // fftwf_malloc'd: the plan's alignment holds
  return out;
}

double mean_power(const float* x, std::size_t n) {
  if (n == 0) return 0;
  // Independent partial sums let the additions overlap (and vectorise).
  constexpr std::size_t kLanes = 8;
  double lane[kLanes] = {};
  std::size_t i = 0;
  for (; i + kLanes <= n; i += kLanes)
    for (std::size_t k = 0; k < kLanes; ++k) lane[k] += static_cast<double>(x[i + k]) * x[i + k];
  double sum = 0;
  for (; i < n; ++i) sum += static_cast<double>(x[i]) * x[i];
  for (double v : lane) sum += v;
  return sum / static_cast<double>(n);
}

double rough_mean_power(const float* x, std::size_t n) {
  if (n == 0) return 0;
  constexpr std::size_t kLanes = 8, kBlock = 256;  // float partial sums of 32 squares each
  double sum = 0;
  std::size_t i = 0;
  for (; i + kBlock <= n; i += kBlock) {
    float lane[kLanes] = {};
    for (std::size_t j = 0; j < kBlock; j += kLanes)
      for (std::size_t k = 0; k < kLanes; ++k) lane[k] += x[i + j + k] * x[i + j + k];
    for (float v : lane) sum += v;
  }
  for (; i < n; ++i) sum += static_cast<double>(x[i]) * x[i];
  return sum / static_cast<double>(n);
}

}  // namespace stethogen::noise
