#include "generator/truth/hemodynamic_traces.hpp"

#include <algorithm>
#include <cmath>
#include <cstring>
#include <numbers>
#include <string>

#include "core/error.hpp"
#include "generator/transmission/portable_extra.hpp"

namespace stethogen::gen {
namespace {

struct Channel {
  const char* name;
  const char* unit;
  const std::vector<double> HemodynamicSeries::*trace;
};

constexpr Channel kChannels[] = {
    {"lv_pressure", "mmHg", &HemodynamicSeries::p_lv},
    {"aortic_pressure", "mmHg", &HemodynamicSeries::p_ao},
    {"la_pressure", "mmHg", &HemodynamicSeries::p_la},
    {"rv_pressure", "mmHg", &HemodynamicSeries::p_rv},
    {"pulmonary_pressure", "mmHg", &HemodynamicSeries::p_pa},
    {"ra_pressure", "mmHg", &HemodynamicSeries::p_ra},
    {"lv_volume", "mL", &HemodynamicSeries::v_lv},
    {"rv_volume", "mL", &HemodynamicSeries::v_rv},
    {"mitral_flow", "mL/s", &HemodynamicSeries::q_mitral},
    {"tricuspid_flow", "mL/s", &HemodynamicSeries::q_tricuspid},
    {"aortic_flow", "mL/s", &HemodynamicSeries::q_aortic},
    {"pulmonic_flow", "mL/s", &HemodynamicSeries::q_pulmonic},
};

// The decimation filter of scipy.signal.resample_poly(x, 1, q) (its default design): a
// Kaiser-windowed sinc (beta 5) with cutoff at the output's Nyquist frequency, 10 q input
// samples either side, normalised to unit gain at 0 Hz.
constexpr double kKaiserBeta = 5.0;
constexpr int kHalfLengthPerFactor = 10;

// Taps g[k], k = 0 .. 2 half + 1, for input samples base - half + k around an output that lies
// frac (in [0, 1)) input samples after base: the continuous filter evaluated at frac - (k - half).
std::vector<double> decimation_taps(int factor, double frac) {
  const int half = kHalfLengthPerFactor * factor;
  const double cutoff = 1.0 / factor;  // of the input's Nyquist frequency
  std::vector<double> g(2 * half + 2);
  double sum = 0;
  for (int k = 0; k < static_cast<int>(g.size()); ++k) {
    double u = frac - (k - half);  // distance from the output, input samples
    double r = u / half;
    if (std::abs(r) > 1.0) continue;
    double window =
        portable_extra::bessel_i0(kKaiserBeta * std::sqrt(1.0 - r * r)) / portable_extra::bessel_i0(kKaiserBeta);
    double x = std::numbers::pi * cutoff * u;
    g[k] = window * cutoff * (x == 0.0 ? 1.0 : portable::sin(x) / x);
    sum += g[k];
  }
  for (double& v : g) v /= sum;
  return g;
}

// out[c] = sum over j < n of taps[j] x[c][j], for C signals at once: each group of four taps is
// loaded once for all of them, and the C sums (four float lanes per vector register; GCC vector
// extension, packed SSE on x86-64) do not wait on each other. Single precision: the traces are
// stored as float32, and the sums of 161 products stay within a few float32 roundings of the
// double-precision filter (tests/generator/test_truth.cpp checks against scipy).
template <std::size_t C>
void dot_all(const float* taps, const float* const* x, std::size_t n, float* out) {
  using Quad = float __attribute__((vector_size(16)));
  Quad acc[C] = {};
  std::size_t j = 0;
  for (; j + 4 <= n; j += 4) {
    Quad t;
    std::memcpy(&t, taps + j, sizeof(Quad));
    for (std::size_t c = 0; c < C; ++c) {
      Quad v;
      std::memcpy(&v, x[c] + j, sizeof(Quad));
      acc[c] += t * v;
    }
  }
  for (std::size_t c = 0; c < C; ++c) {
    float sum = (acc[c][0] + acc[c][1]) + (acc[c][2] + acc[c][3]);
    for (std::size_t r = j; r < n; ++r) sum += taps[r] * x[c][r];
    out[c] = sum;
  }
}

}  // namespace

HemodynamicTraces hemodynamic_traces(const CirculationResult& circulation, double rate_hz) {
  const HemodynamicSeries& s = circulation.series;
  HemodynamicTraces out;
  out.sample_rate_hz = rate_hz;
  constexpr std::size_t n_channels = std::size(kChannels);
  std::size_t n_out = 0;
  if (s.size() >= 2) n_out = static_cast<std::size_t>(std::ceil(circulation.duration_s * rate_hz - 1e-9));
  out.data = SiteArray<float>(n_channels, n_out);

  const double ratio = s.rate_hz / rate_hz;
  const int factor = static_cast<int>(std::lround(ratio));
  if (n_out > 0 && (factor < 1 || std::abs(ratio - factor) > 1e-9))
    throw RuntimeFailure("hemodynamic traces: the series rate " + std::to_string(s.rate_hz) +
                         " Hz is not a whole multiple of the trace rate " + std::to_string(rate_hz) + " Hz");
  // Output k (time k / rate) lies at input position (k / rate - t0) * series rate = start + k
  // factor: the same fractional phase for every output, so one set of taps serves them all.
  const double start = -s.t0_s * s.rate_hz;
  const double base = std::floor(start);
  const std::vector<double> taps_exact = n_out > 0 ? decimation_taps(factor, start - base) : std::vector<double>{};
  const std::vector<float> taps(taps_exact.begin(), taps_exact.end());
  const auto half = static_cast<std::int64_t>(kHalfLengthPerFactor * factor);
  const auto n_in = static_cast<std::int64_t>(s.size());
  std::vector<float> single[n_channels];  // the series in single precision, for dot_all
  const float* x[n_channels];
  for (std::size_t c = 0; c < n_channels; ++c) {
    out.names.emplace_back(kChannels[c].name);
    out.units.emplace_back(kChannels[c].unit);
    const std::vector<double>& trace = s.*(kChannels[c].trace);
    if (n_out > 0 && trace.size() != s.size()) throw RuntimeFailure("hemodynamic traces: series of unequal length");
    single[c].assign(trace.begin(), trace.end());
    x[c] = single[c].data();
  }
  const float* window[n_channels];
  float value[n_channels];
  for (std::size_t k = 0; k < n_out; ++k) {
    // Taps over input samples first .. first + taps - 1; those outside the series count as 0.
    const std::int64_t first = static_cast<std::int64_t>(base) + static_cast<std::int64_t>(k) * factor - half;
    const std::int64_t lo = std::max<std::int64_t>(0, -first);
    const std::int64_t hi = std::min<std::int64_t>(static_cast<std::int64_t>(taps.size()), n_in - first);
    for (std::size_t c = 0; c < n_channels; ++c) window[c] = x[c] + first + lo;
    dot_all<n_channels>(taps.data() + lo, window, static_cast<std::size_t>(std::max<std::int64_t>(hi - lo, 0)), value);
    for (std::size_t c = 0; c < n_channels; ++c) out.data.row(c)[k] = value[c];
  }
  return out;
}

}  // namespace stethogen::gen
