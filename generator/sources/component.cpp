#include "generator/sources/component.hpp"

#include <cmath>
#include <numbers>
#include "generator/transmission/portable_extra.hpp"

namespace stethogen::gen {
namespace {

double shape(double x) {
  if (x <= 0) return 0.0;
  double r = x / kEnvelopeOrder;
  static_assert(kEnvelopeOrder == 2.0, "the power below is written out for speed");
  return r * r * portable::exp(kEnvelopeOrder - x);
}

// Bisection on a monotone branch of the envelope.
double solve_branch(double fraction, double lo, double hi, bool rising) {
  for (int i = 0; i < 200; ++i) {
    double mid = 0.5 * (lo + hi);
    bool below = shape(mid) < fraction;
    if (below == rising) lo = mid; else hi = mid;
  }
  return 0.5 * (lo + hi);
}

const double kOnsetX = envelope_rising_crossing(kEnvelopeThreshold);
const double kOffsetX = envelope_falling_crossing(kEnvelopeThreshold);
const double kSupportX = envelope_falling_crossing(kSupportFraction);

}  // namespace

double envelope_rising_crossing(double fraction) { return solve_branch(fraction, 0.0, kEnvelopeOrder, true); }
double envelope_falling_crossing(double fraction) {
  return solve_branch(fraction, kEnvelopeOrder, 200.0, false);
}

double SoundComponent::envelope(double time_s) const { return amplitude * shape((time_s - start_s) / tau_s); }

double SoundComponent::instantaneous_frequency_hz(double time_s) const {
  double t = std::max(0.0, time_s - start_s);
  return f_end_hz + (f_start_hz - f_end_hz) * portable::exp(-t / chirp_tau_s);
}

std::complex<double> SoundComponent::analytic(double time_s) const {
  double t = time_s - start_s;
  if (t <= 0) return {0.0, 0.0};
  double e = envelope(time_s);
  if (e == 0.0) return {0.0, 0.0};
  // Phase = 2 pi * integral of the instantaneous frequency from the start.
  double cycles = f_end_hz * t + (f_start_hz - f_end_hz) * chirp_tau_s * (1.0 - portable::exp(-t / chirp_tau_s));
  return portable_extra::polar(e, 2.0 * std::numbers::pi * cycles);
}

namespace {

// exp(i d) for |d| <= kMaxSeriesAngle by its Taylor series to d^(2 order + 1) (cos to
// d^(2 order), sin to d^(2 order + 1)), Horner form with the factorial ratios as reciprocals.
// At order 5 the first omitted term, d^12 / 12!, is about 1e-16 at |d| = 0.25 and falls
// steeply below: exact to double rounding and far cheaper than sincos.
constexpr double kMaxSeriesAngle = 0.25;
constexpr double kCosRatio[] = {0, 1.0 / 2, 1.0 / 12, 1.0 / 30, 1.0 / 56, 1.0 / 90};
constexpr double kSinRatio[] = {0, 1.0 / 6, 1.0 / 20, 1.0 / 42, 1.0 / 72, 1.0 / 110};
template <int Order>
std::complex<double> small_rotation(double d) {
  const double d2 = d * d;
  double c = 1.0, s = 1.0;
  for (int m = Order; m >= 1; --m) {
    c = 1.0 - d2 * kCosRatio[m] * c;
    s = 1.0 - d2 * kSinRatio[m] * s;
  }
  return {c, d * s};
}
// The largest |d| at which order 1..4 still has its first omitted term d^(2 order + 2) /
// (2 order + 2)! below 1e-17; beyond the last, order 5.
constexpr double kOrderLimit[] = {0, 1.24e-4, 4.40e-3, 2.82e-2, 9.04e-2};

// out[j] = carrier * exp(i step chirp[j]) for j < n, the chirp decaying (|step chirp| falls
// with j): each stretch with the lowest order that is exact there, in loops the compiler
// vectorises.
template <int Order>
void rotations(std::complex<double> carrier, double step, const double* chirp, std::size_t from, std::size_t to,
               double* re, double* im) {
  for (std::size_t j = from; j < to; ++j) {
    const std::complex<double> r = small_rotation<Order>(step * chirp[j]);
    re[j] = carrier.real() * r.real() - carrier.imag() * r.imag();
    im[j] = carrier.real() * r.imag() + carrier.imag() * r.real();
  }
}
void decaying_rotations(std::complex<double> carrier, double step, const double* chirp, std::size_t n, double* re,
                        double* im) {
  std::size_t j = 0;
  auto until_below = [&](double limit) {
    std::size_t k = j;
    while (k < n && std::fabs(step * chirp[k]) > limit) ++k;
    return k;
  };
  std::size_t k = until_below(kOrderLimit[4]);
  rotations<5>(carrier, step, chirp, j, k, re, im);
  j = k, k = until_below(kOrderLimit[3]);
  rotations<4>(carrier, step, chirp, j, k, re, im);
  j = k, k = until_below(kOrderLimit[2]);
  rotations<3>(carrier, step, chirp, j, k, re, im);
  j = k, k = until_below(kOrderLimit[1]);
  rotations<2>(carrier, step, chirp, j, k, re, im);
  rotations<1>(carrier, step, chirp, k, n, re, im);
}

// Two doubles in one vector register (GCC vector extension: packed SSE2 on x86-64).
using Pair = double __attribute__((vector_size(16)));

}  // namespace

void SoundComponent::render(double t_first_s, double rate_hz, std::size_t n, double weight,
                            std::complex<double>* out) const {
  // Blocks of kBlock samples, each anchored exactly (exp, sincos) at its first sample: the
  // recurrences' drift stays ~1e-14. Blocks are independent, so up to kTogether full blocks are
  // advanced in lockstep: their recurrences overlap in the CPU instead of waiting on one chain.
  constexpr std::size_t kBlock = 256, kTogether = 4;
  const double h = 1.0 / rate_hz;
  const double decay = portable::exp(-h / tau_s), chirp_decay = portable::exp(-h / chirp_tau_s);
  const double sweep_cycles = (f_start_hz - f_end_hz) * chirp_tau_s;
  // The phase advances by 2 pi (f_end h + sweep chirp (1 - chirp_decay)) per sample: a fixed
  // carrier rotation times a small chirp rotation (at most pi f_start h for chirp_tau = 2 tau).
  const std::complex<double> carrier = portable_extra::polar(1.0, 2.0 * std::numbers::pi * f_end_hz * h);
  const double chirp_step = 2.0 * std::numbers::pi * sweep_cycles * (1.0 - chirp_decay);
  const bool by_rotation = std::fabs(chirp_step) <= kMaxSeriesAngle;
  const double inv_rise = 1.0 / (kEnvelopeOrder * tau_s), scale = weight * amplitude;
  auto time_at = [&](std::size_t i) { return t_first_s + static_cast<double>(i) * h - start_s; };
  auto phase_at = [&](double t, double chirp) {
    return 2.0 * std::numbers::pi * (f_end_hz * t + sweep_cycles * (1.0 - chirp));
  };

  std::size_t i = 0;
  for (; i < n && time_at(i) <= 0; ++i) out[i] = {0.0, 0.0};
  if (!by_rotation) {
    // A chirp too fast for the series at this rate: the phase from its closed form per sample.
    while (i < n) {
      const double t0 = time_at(i);
      double tail = portable::exp(kEnvelopeOrder - t0 / tau_s), chirp = portable::exp(-t0 / chirp_tau_s);
      for (std::size_t end = std::min(n, i + kBlock); i < end; ++i, tail *= decay, chirp *= chirp_decay) {
        const double t = time_at(i), r = t * inv_rise;
        out[i] = (scale * r * r * tail) * portable_extra::polar(1.0, phase_at(t, chirp));
      }
    }
    return;
  }

  double step_re[kTogether][kBlock], step_im[kTogether][kBlock], chirp_run[kTogether][kBlock];
  while (i < n) {
    // With fewer than kTogether full blocks left, the last, partial block runs beside them
    // instead of after them (the same anchors, so the same values): its recurrence overlaps
    // theirs instead of waiting on one chain.
    const std::size_t full = std::min(kTogether, (n - i) / kBlock);
    const std::size_t part = full < kTogether ? n - i - full * kBlock : 0;
    const std::size_t blocks = full + (part > 0 ? 1 : 0), len = full > 0 ? kBlock : part;
    double tail[kTogether], chirp[kTogether];
    std::complex<double> phasor[kTogether];
    for (std::size_t b = 0; b < blocks; ++b) {
      const double t = time_at(i + b * kBlock);
      tail[b] = portable::exp(kEnvelopeOrder - t / tau_s);  // exp(k - x)
      chirp[b] = portable::exp(-t / chirp_tau_s);
      phasor[b] = portable_extra::polar(1.0, phase_at(t, chirp[b]));
    }
    // Per-sample rotations carrier * exp(i chirp_step chirp): independent of each other (the
    // partial block's values past its end are not used).
    for (std::size_t j = 0; j < len; ++j)
      for (std::size_t b = 0; b < blocks; ++b) {
        chirp_run[b][j] = chirp[b];
        chirp[b] *= chirp_decay;
      }
    for (std::size_t b = 0; b < blocks; ++b)
      decaying_rotations(carrier, chirp_step, chirp_run[b], b < full ? kBlock : part, step_re[b], step_im[b]);
    // Blocks 2p and 2p + 1 in the two lanes of vector p; a block left over fills both lanes of
    // its vector (the same values twice, stored to the same place). Every lane performs the
    // operations of a scalar loop over its block, so the values are those of one.
    constexpr std::size_t kVectors = (kTogether + 1) / 2;
    const std::size_t vectors = (blocks + 1) / 2;
    std::size_t lane_a[kVectors], lane_b[kVectors];
    Pair pre[kVectors], pim[kVectors], ptail[kVectors], pindex[kVectors];
    for (std::size_t p = 0; p < vectors; ++p) {
      const std::size_t a = 2 * p, b = 2 * p + 1 < blocks ? 2 * p + 1 : 2 * p;
      lane_a[p] = a, lane_b[p] = b;
      pre[p] = Pair{phasor[a].real(), phasor[b].real()};
      pim[p] = Pair{phasor[a].imag(), phasor[b].imag()};
      ptail[p] = Pair{tail[a], tail[b]};
      pindex[p] = Pair{static_cast<double>(i + a * kBlock), static_cast<double>(i + b * kBlock)};
    }
    // Samples from .. to of the first active vectors.
    auto run = [&](std::size_t from, std::size_t to, std::size_t active) {
      for (std::size_t j = from; j < to; ++j) {
#pragma GCC unroll 2
        for (std::size_t p = 0; p < active; ++p) {
          const Pair r = (t_first_s + pindex[p] * h - start_s) * inv_rise;  // time_at, per lane
          const Pair a = scale * r * r * ptail[p];
          const Pair re = a * pre[p], im = a * pim[p];
          out[i + lane_a[p] * kBlock + j] = {re[0], im[0]};
          out[i + lane_b[p] * kBlock + j] = {re[1], im[1]};
          const Pair step_r = {step_re[lane_a[p]][j], step_re[lane_b[p]][j]};
          const Pair step_i = {step_im[lane_a[p]][j], step_im[lane_b[p]][j]};
          const Pair next_re = pre[p] * step_r - pim[p] * step_i;  // the complex product, per lane
          pim[p] = pre[p] * step_i + pim[p] * step_r;
          pre[p] = next_re;
          ptail[p] *= decay;
          pindex[p] += 1.0;
        }
      }
    };
    if (full == 0 || part == 0) {
      run(0, len, vectors);
    } else {
      run(0, part, vectors);
      // The partial block (block full) ends: as lane b its vector goes on with lane a in both
      // lanes; alone in the last vector, that vector stops.
      const std::size_t p = full / 2;
      if (full % 2 == 1) {
        lane_b[p] = lane_a[p];
        pre[p][1] = pre[p][0], pim[p][1] = pim[p][0], ptail[p][1] = ptail[p][0], pindex[p][1] = pindex[p][0];
        run(part, kBlock, vectors);
      } else {
        run(part, kBlock, vectors - 1);
      }
    }
    i += full * kBlock + part;
  }
}

double SoundComponent::support_end_s() const { return start_s + kSupportX * tau_s; }
double SoundComponent::onset_s() const { return start_s + kOnsetX * tau_s; }
double SoundComponent::peak_s() const { return start_s + kEnvelopeOrder * tau_s; }
double SoundComponent::offset_s() const { return start_s + kOffsetX * tau_s; }

}  // namespace stethogen::gen
