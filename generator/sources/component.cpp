#include "generator/sources/component.hpp"

#include <cmath>
#include <numbers>

namespace stethogen::gen {
namespace {

double shape(double x) {
  if (x <= 0) return 0.0;
  double r = x / kEnvelopeOrder;
  static_assert(kEnvelopeOrder == 2.0, "the power below is written out for speed");
  return r * r * std::exp(kEnvelopeOrder - x);
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
  return f_end_hz + (f_start_hz - f_end_hz) * std::exp(-t / chirp_tau_s);
}

std::complex<double> SoundComponent::analytic(double time_s) const {
  double t = time_s - start_s;
  if (t <= 0) return {0.0, 0.0};
  double e = envelope(time_s);
  if (e == 0.0) return {0.0, 0.0};
  // Phase = 2 pi * integral of the instantaneous frequency from the start.
  double cycles = f_end_hz * t + (f_start_hz - f_end_hz) * chirp_tau_s * (1.0 - std::exp(-t / chirp_tau_s));
  return std::polar(e, 2.0 * std::numbers::pi * cycles);
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

// Plain complex product: std::complex's operator* adds a NaN-recovery branch (C99 Annex G)
// that the finite values here never need.
std::complex<double> multiply(std::complex<double> a, std::complex<double> b) {
  return {a.real() * b.real() - a.imag() * b.imag(), a.real() * b.imag() + a.imag() * b.real()};
}

}  // namespace

void SoundComponent::render(double t_first_s, double rate_hz, std::size_t n, double weight,
                            std::complex<double>* out) const {
  // Blocks of kBlock samples, each anchored exactly (exp, sincos) at its first sample: the
  // recurrences' drift stays ~1e-14. Blocks are independent, so up to kTogether full blocks are
  // advanced in lockstep: their recurrences overlap in the CPU instead of waiting on one chain.
  constexpr std::size_t kBlock = 256, kTogether = 4;
  const double h = 1.0 / rate_hz;
  const double decay = std::exp(-h / tau_s), chirp_decay = std::exp(-h / chirp_tau_s);
  const double sweep_cycles = (f_start_hz - f_end_hz) * chirp_tau_s;
  // The phase advances by 2 pi (f_end h + sweep chirp (1 - chirp_decay)) per sample: a fixed
  // carrier rotation times a small chirp rotation (at most pi f_start h for chirp_tau = 2 tau).
  const std::complex<double> carrier = std::polar(1.0, 2.0 * std::numbers::pi * f_end_hz * h);
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
      double tail = std::exp(kEnvelopeOrder - t0 / tau_s), chirp = std::exp(-t0 / chirp_tau_s);
      for (std::size_t end = std::min(n, i + kBlock); i < end; ++i, tail *= decay, chirp *= chirp_decay) {
        const double t = time_at(i), r = t * inv_rise;
        out[i] = (scale * r * r * tail) * std::polar(1.0, phase_at(t, chirp));
      }
    }
    return;
  }

  double step_re[kTogether][kBlock], step_im[kTogether][kBlock], chirp_run[kTogether][kBlock];
  // One lone block of a round, advanced on its own (scalars, kept in registers).
  struct Single {
    std::size_t b = 0, len = 0;
    double tail = 0;
    std::complex<double> phasor;
  };
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
      tail[b] = std::exp(kEnvelopeOrder - t / tau_s);  // exp(k - x)
      chirp[b] = std::exp(-t / chirp_tau_s);
      phasor[b] = std::polar(1.0, phase_at(t, chirp[b]));
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
    // Full blocks 2p and 2p + 1 in the two lanes of a vector (pair p); a full block left over
    // and the partial block on their own: the same operations per block as a scalar loop over
    // it, so the same values.
    const std::size_t pairs = full / 2;
    Pair pre[kTogether / 2], pim[kTogether / 2], ptail[kTogether / 2], pindex[kTogether / 2];
    for (std::size_t p = 0; p < pairs; ++p) {
      pre[p] = Pair{phasor[2 * p].real(), phasor[2 * p + 1].real()};
      pim[p] = Pair{phasor[2 * p].imag(), phasor[2 * p + 1].imag()};
      ptail[p] = Pair{tail[2 * p], tail[2 * p + 1]};
      pindex[p] = Pair{static_cast<double>(i + 2 * p * kBlock), static_cast<double>(i + (2 * p + 1) * kBlock)};
    }
    Single one, two;
    std::size_t singles = 0;
    auto add_single = [&](std::size_t b, std::size_t block_len) {
      (singles == 0 ? one : two) = Single{b, block_len, tail[b], phasor[b]};
      ++singles;
    };
    if (full % 2 == 1) add_single(full - 1, kBlock);
    if (part > 0) add_single(full, part);
    auto advance = [&](Single& q, std::size_t j) {
      const std::size_t k = i + q.b * kBlock + j;
      const double r = time_at(k) * inv_rise;
      out[k] = (scale * r * r * q.tail) * q.phasor;
      q.phasor = multiply(q.phasor, {step_re[q.b][j], step_im[q.b][j]});
      q.tail *= decay;
    };
    for (std::size_t j = 0; j < len; ++j) {
#pragma GCC unroll 2
      for (std::size_t p = 0; p < pairs; ++p) {
        const Pair r = (t_first_s + pindex[p] * h - start_s) * inv_rise;  // time_at, per lane
        const Pair a = scale * r * r * ptail[p];
        const Pair re = a * pre[p], im = a * pim[p];
        const std::size_t k = i + 2 * p * kBlock + j;
        out[k] = {re[0], im[0]};
        out[k + kBlock] = {re[1], im[1]};
        const Pair step_r = {step_re[2 * p][j], step_re[2 * p + 1][j]};
        const Pair step_i = {step_im[2 * p][j], step_im[2 * p + 1][j]};
        const Pair next_re = pre[p] * step_r - pim[p] * step_i;  // multiply(), per lane
        pim[p] = pre[p] * step_i + pim[p] * step_r;
        pre[p] = next_re;
        ptail[p] *= decay;
        pindex[p] += 1.0;
      }
      if (singles > 0 && j < one.len) advance(one, j);
      if (singles > 1 && j < two.len) advance(two, j);
    }
    i += full * kBlock + part;
  }
}

double SoundComponent::support_end_s() const { return start_s + kSupportX * tau_s; }
double SoundComponent::onset_s() const { return start_s + kOnsetX * tau_s; }
double SoundComponent::peak_s() const { return start_s + kEnvelopeOrder * tau_s; }
double SoundComponent::offset_s() const { return start_s + kOffsetX * tau_s; }

}  // namespace stethogen::gen
