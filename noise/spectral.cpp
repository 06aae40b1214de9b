#include "noise/spectral.hpp"

#include <cmath>
#include <memory>
#include <mutex>

#include <fftw3.h>

namespace stethogen::noise {

namespace {

// FFTW's planner is not thread-safe; execution of an existing plan on new arrays is.
std::mutex& planner_mutex() {
  static std::mutex m;
  return m;
}

struct FftwFree {
  void operator()(void* p) const { fftw_free(p); }
};

}  // namespace

void fill_gaussian(RandomStream& rng, float* out, std::size_t n) {
  constexpr double kTwoPi = 2.0 * M_PI;
  constexpr double kInv32 = 0x1.0p-32;
  std::size_t i = 0;
  for (; i < n; i += 2) {
    std::uint64_t r = rng.next_u64();
    double u1 = (static_cast<double>(r >> 32) + 1.0) * kInv32;  // (0, 1]: finite logarithm
    double u2 = static_cast<double>(r & 0xffffffffu) * kInv32;
    double radius = std::sqrt(-2.0 * std::log(u1));
    double angle = kTwoPi * u2;
    out[i] = static_cast<float>(radius * std::cos(angle));
    if (i + 1 < n) out[i + 1] = static_cast<float>(radius * std::sin(angle));
  }
}

std::vector<float> shaped_gaussian(RandomStream& rng, std::size_t n, double sample_rate_hz,
                                   const std::function<double(double frequency_hz)>& amplitude) {
  std::vector<float> out(n, 0.0f);
  if (n < 2) return out;
  const std::size_t bins = n / 2 + 1;
  std::unique_ptr<fftw_complex, FftwFree> spectrum(fftw_alloc_complex(bins));
  std::unique_ptr<double, FftwFree> signal(fftw_alloc_real(n));
  std::vector<float> draws(2 * bins);
  fill_gaussian(rng, draws.data(), draws.size());
  const double bin_hz = sample_rate_hz / static_cast<double>(n);
  fftw_complex* s = spectrum.get();
  for (std::size_t k = 0; k < bins; ++k) {
    double a = k == 0 ? 0.0 : amplitude(k * bin_hz);
    s[k][0] = a * draws[2 * k];
    s[k][1] = a * draws[2 * k + 1];
  }
  if (n % 2 == 0) s[bins - 1][1] = 0;  // the Nyquist bin of an even length is real
  fftw_plan plan;
  {
    std::lock_guard lock(planner_mutex());
    plan = fftw_plan_dft_c2r_1d(static_cast<int>(n), s, signal.get(), FFTW_ESTIMATE);
  }
  fftw_execute(plan);
  {
    std::lock_guard lock(planner_mutex());
    fftw_destroy_plan(plan);
  }
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
  double sum = 0;
  for (std::size_t i = 0; i < n; ++i) sum += static_cast<double>(x[i]) * x[i];
  return sum / static_cast<double>(n);
}

void scale_to_power(std::vector<float>& x, double target_power) {
  double p = mean_power(x.data(), x.size());
  if (p <= 0) return;
  const float gain = static_cast<float>(std::sqrt(target_power / p));
  for (float& v : x) v *= gain;
}

}  // namespace stethogen::noise
