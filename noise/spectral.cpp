#include "noise/spectral.hpp"

#include <cmath>
#include <map>
#include <memory>
#include <mutex>

#include <fftw3.h>

namespace stethogen::noise {

namespace {

// FFTW's planner is not thread-safe, executing a plan on new arrays is: plans are made once
// per length under a lock and kept for the life of the process.
struct PlanCache {
  std::mutex mutex;
  std::map<std::size_t, fftw_plan> plans;
  ~PlanCache() {
    for (auto& [n, plan] : plans) fftw_destroy_plan(plan);
  }
};

fftw_plan c2r_plan(std::size_t n) {
  static PlanCache cache;
  std::lock_guard lock(cache.mutex);
  auto& plans = cache.plans;
  auto it = plans.find(n);
  if (it != plans.end()) return it->second;
  fftw_complex* in = fftw_alloc_complex(n / 2 + 1);
  double* out = fftw_alloc_real(n);
  fftw_plan plan = fftw_plan_dft_c2r_1d(static_cast<int>(n), in, out, FFTW_ESTIMATE | FFTW_DESTROY_INPUT);
  fftw_free(in);
  fftw_free(out);
  plans.emplace(n, plan);
  return plan;
}

struct FftwFree {
  void operator()(void* p) const { fftw_free(p); }
};

}  // namespace

std::vector<double> amplitude_response(std::size_t n, double sample_rate_hz,
                                       const std::function<double(double frequency_hz)>& amplitude) {
  std::vector<double> a(n / 2 + 1, 0.0);
  const double bin_hz = sample_rate_hz / static_cast<double>(n);
  for (std::size_t k = 1; k < a.size(); ++k) a[k] = amplitude(static_cast<double>(k) * bin_hz);
  return a;
}

std::vector<float> shaped_gaussian(RandomStream& rng, const std::vector<double>& response, std::size_t n) {
  std::vector<float> out(n, 0.0f);
  if (n < 2) return out;
  const std::size_t bins = n / 2 + 1;
  std::unique_ptr<fftw_complex, FftwFree> spectrum(fftw_alloc_complex(bins));
  std::unique_ptr<double, FftwFree> signal(fftw_alloc_real(n));
  std::vector<float> draws(2 * bins);
  fill_gaussian(rng, draws.data(), draws.size());
  fftw_complex* s = spectrum.get();
  for (std::size_t k = 0; k < bins; ++k) {
    double a = k == 0 ? 0.0 : response[k];
    s[k][0] = a * draws[2 * k];
    s[k][1] = a * draws[2 * k + 1];
  }
  if (n % 2 == 0) s[bins - 1][1] = 0;  // the Nyquist bin of an even length is real
  fftw_execute_dft_c2r(c2r_plan(n), s, signal.get());  // fftw_malloc'd: the plan's alignment holds
  double power = 0;
  const double* x = signal.get();
  for (std::size_t i = 0; i < n; ++i) power += x[i] * x[i];
  power /= static_cast<double>(n);
  const double gain = power > 0 ? 1.0 / std::sqrt(power) : 0.0;
  for (std::size_t i = 0; i < n; ++i) out[i] = static_cast<float>(x[i] * gain);
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

}  // namespace stethogen::noise
