// The single-precision path of the site filters and its gate (biquad.hpp).
#include "generator/transmission/biquad.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <cstring>
#include <stdexcept>

#if defined(__SSE2__)
#include <emmintrin.h>
#endif

namespace stethogen::gen {

namespace {

// Two doubles in one vector register (GCC vector extension: packed SSE2 on x86-64).
using Pair = double __attribute__((vector_size(16)));

// Poles of z^2 + a1 z + a2 (a first-order section's second is 0).
std::array<std::complex<double>, 2> poles(double a1, double a2) {
  const std::complex<double> disc = std::sqrt(std::complex<double>(a1 * a1 - 4.0 * a2));
  return {(-a1 + disc) / 2.0, (-a1 - disc) / 2.0};
}

// Four floats in one vector register (packed SSE on x86-64): two complex samples, (re, im) of
// signal a then of signal b.
using Quad = float __attribute__((vector_size(16)));
using FloatPair = float __attribute__((vector_size(8)));

#if defined(__SSE2__)
// SSE2 conversions (the generic vector code below compiles to extra moves and scalar converts).
Quad load_two(const std::complex<double>* a, const std::complex<double>* b) {
  const __m128 x = _mm_cvtpd_ps(_mm_loadu_pd(reinterpret_cast<const double*>(a)));
  const __m128 y = _mm_cvtpd_ps(_mm_loadu_pd(reinterpret_cast<const double*>(b)));
  return reinterpret_cast<Quad>(_mm_movelh_ps(x, y));
}
void store_low(const Quad& v, std::complex<double>* a) {
  _mm_storeu_pd(reinterpret_cast<double*>(a), _mm_cvtps_pd(reinterpret_cast<__m128>(v)));
}
void store_high(const Quad& v, std::complex<double>* b) {
  const __m128 w = reinterpret_cast<__m128>(v);
  _mm_storeu_pd(reinterpret_cast<double*>(b), _mm_cvtps_pd(_mm_movehl_ps(w, w)));
}
#else
Quad load_two(const std::complex<double>* a, const std::complex<double>* b) {
  Pair x, y;
  std::memcpy(&x, a, sizeof x);
  std::memcpy(&y, b, sizeof y);
  const FloatPair fx = __builtin_convertvector(x, FloatPair), fy = __builtin_convertvector(y, FloatPair);
  return __builtin_shufflevector(fx, fy, 0, 1, 2, 3);
}
void store_low(const Quad& v, std::complex<double>* a) {
  const Pair x = __builtin_convertvector(__builtin_shufflevector(v, v, 0, 1), Pair);
  std::memcpy(static_cast<void*>(a), &x, sizeof x);
}
void store_high(const Quad& v, std::complex<double>* b) {
  const Pair y = __builtin_convertvector(__builtin_shufflevector(v, v, 2, 3), Pair);
  std::memcpy(static_cast<void*>(b), &y, sizeof y);
}
#endif

// A cascade's float coefficients, the first-order sections first and the second-order ones
// after them (the sections of a cascade commute; their order only changes the rounding), index[j]
// being section j's place in the cascade (and in the state).
struct SingleCascade {
  float b0[kMaxSingleSections], b1[kMaxSingleSections], b2[kMaxSingleSections], a1[kMaxSingleSections],
      a2[kMaxSingleSections];
  std::size_t index[kMaxSingleSections];
  std::size_t first_order = 0, second_order = 0;
  float gain = 1;
  bool scaled = false;
};

SingleCascade single_cascade(const FilterCascade& cascade) {
  SingleCascade c;
  std::size_t j = 0;
  for (int pass = 0; pass < 2; ++pass)
    for (std::size_t k = 0; k < cascade.sections.size(); ++k) {
      const Biquad& s = cascade.sections[k];
      const bool first = s.b2 == 0.0 && s.a2 == 0.0;
      if (first != (pass == 0)) continue;
      c.b0[j] = static_cast<float>(s.b0), c.b1[j] = static_cast<float>(s.b1), c.b2[j] = static_cast<float>(s.b2);
      c.a1[j] = static_cast<float>(s.a1), c.a2[j] = static_cast<float>(s.a2);
      c.index[j++] = k;
      (first ? c.first_order : c.second_order) += 1;
    }
  c.gain = static_cast<float>(cascade.gain);
  c.scaled = cascade.gain != 1.0;
  return c;
}

// P pairs of signals (lane 2p and 2p + 1 in vector p) through F first-order and then G
// second-order sections in lockstep, n samples each, from their states and back. A lane whose
// signal is also its neighbour's (high[p] false) is computed but not stored: a lone signal runs
// as a pair with itself. The forms are fixed at compile time: no branch per section and sample.
template <std::size_t F, std::size_t G, std::size_t P>
void fused_single(const SingleCascade& c, std::complex<double>* const* data, std::size_t n,
                  std::complex<double>* const* state, const bool* high) {
  constexpr std::size_t N = F + G, M = N > 0 ? N : 1;  // M: array sizes (no sections: the gain alone)
  Quad z1[P][M], z2[P][M];
  for (std::size_t k = 0; k < N; ++k)
    for (std::size_t p = 0; p < P; ++p) {
      const std::size_t at = 2 * c.index[k];
      z1[p][k] = load_two(&state[2 * p][at], &state[2 * p + 1][at]);
      z2[p][k] = load_two(&state[2 * p][at + 1], &state[2 * p + 1][at + 1]);
    }
  // Everything the loop reads in locals: the stores through data could otherwise alias them.
  float b0[M], b1[M], b2[M], a1[M], a2[M];
  for (std::size_t k = 0; k < N; ++k) b0[k] = c.b0[k], b1[k] = c.b1[k], b2[k] = c.b2[k], a1[k] = c.a1[k], a2[k] = c.a2[k];
  std::complex<double>* lane[2 * P];
  bool store_second[P];
  for (std::size_t p = 0; p < P; ++p) lane[2 * p] = data[2 * p], lane[2 * p + 1] = data[2 * p + 1], store_second[p] = high[p];
  const float gain = c.gain;
  const bool scaled = c.scaled;
  for (std::size_t i = 0; i < n; ++i) {
    Quad x[P];
#pragma GCC unroll 2
    for (std::size_t p = 0; p < P; ++p) x[p] = load_two(&lane[2 * p][i], &lane[2 * p + 1][i]);
#pragma GCC unroll 8
    for (std::size_t k = 0; k < F; ++k) {
#pragma GCC unroll 2
      for (std::size_t p = 0; p < P; ++p) {
        const Quad y = b0[k] * x[p] + z1[p][k];
        z1[p][k] = b1[k] * x[p] - a1[k] * y;
        x[p] = y;
      }
    }
#pragma GCC unroll 8
    for (std::size_t k = F; k < N; ++k) {
#pragma GCC unroll 2
      for (std::size_t p = 0; p < P; ++p) {
        const Quad y = b0[k] * x[p] + z1[p][k];
        z1[p][k] = b1[k] * x[p] - a1[k] * y + z2[p][k];
        z2[p][k] = b2[k] * x[p] - a2[k] * y;
        x[p] = y;
      }
    }
#pragma GCC unroll 2
    for (std::size_t p = 0; p < P; ++p) {
      if (scaled) x[p] = x[p] * gain;
      store_low(x[p], &lane[2 * p][i]);
      if (store_second[p]) store_high(x[p], &lane[2 * p + 1][i]);
    }
  }
  for (std::size_t p = 0; p < P; ++p)
    for (std::size_t k = 0; k < N; ++k) {
      const std::size_t at = 2 * c.index[k];
      store_low(z1[p][k], &state[2 * p][at]);
      store_low(z2[p][k], &state[2 * p][at + 1]);
      if (high[p]) {
        store_high(z1[p][k], &state[2 * p + 1][at]);
        store_high(z2[p][k], &state[2 * p + 1][at + 1]);
      }
    }
}

// fused_single for the cascade's numbers of first- and second-order sections.
template <std::size_t P, std::size_t F = 0, std::size_t G = 0>
void single_lanes(const SingleCascade& c, std::complex<double>* const* data, std::size_t n,
                  std::complex<double>* const* state, const bool* high) {
  if constexpr (F + G <= kMaxSingleSections) {
    if (c.first_order != F) return single_lanes<P, F + 1, 0>(c, data, n, state, high);
    if (c.second_order != G) return single_lanes<P, F, G + 1>(c, data, n, state, high);
    return fused_single<F, G, P>(c, data, n, state, high);
  }
  throw std::logic_error("single-precision filter: too many sections");
}

}  // namespace

double single_precision_error_bound(const FilterCascade& cascade) {
  constexpr double kFloatRounding = 0x1p-24;
  double bound = 0;
  for (const Biquad& s : cascade.sections) {
    const auto exact = poles(s.a1, s.a2);
    const auto rounded = poles(static_cast<float>(s.a1), static_cast<float>(s.a2));
    for (std::complex<double> p : exact) {
      if (std::abs(p) == 0.0) continue;
      const double shift = std::min(std::abs(rounded[0] - p), std::abs(rounded[1] - p));
      const double margin = 1.0 - std::abs(p);
      bound = std::max(bound, margin > 0 ? (shift + kFloatRounding) / margin : INFINITY);
    }
  }
  return bound;
}

bool single_precision_suffices(const FilterCascade& cascade) {
  return cascade.sections.size() <= kMaxSingleSections && single_precision_error_bound(cascade) <= kSinglePrecisionTolerance;
}

void filter_continue_together_single(const FilterCascade& cascade, std::complex<double>* const* data,
                                     const std::size_t* n, std::complex<double>* const* state, std::size_t count) {
  const SingleCascade single = single_cascade(cascade);
  // Four (or two) signals in lockstep over their common length; each one's rest, and a signal
  // left over, as a pair with itself. A signal's arithmetic is the same in every lane, so its
  // values do not depend on its neighbours.
  constexpr bool kBoth[2] = {true, true}, kLow[2] = {false, false};
  auto alone = [&](std::size_t c, std::size_t from) {
    std::complex<double>* d[2] = {data[c] + from, data[c] + from};
    std::complex<double>* st[2] = {state[c], state[c]};
    single_lanes<1>(single, d, n[c] - from, st, kLow);
  };
  std::size_t done = 0;
  while (done < count) {
    const std::size_t run = count - done >= 4 ? 4 : count - done >= 2 ? 2 : 0;
    if (run == 0) {
      alone(done++, 0);
      continue;
    }
    std::size_t common = n[done];
    for (std::size_t c = done; c < done + run; ++c) common = std::min(common, n[c]);
    if (run == 4) single_lanes<2>(single, data + done, common, state + done, kBoth);
    else single_lanes<1>(single, data + done, common, state + done, kBoth);
    for (std::size_t c = done; c < done + run; ++c) alone(c, common);
    done += run;
  }
}

}  // namespace stethogen::gen
