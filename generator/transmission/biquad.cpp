#include "generator/transmission/biquad.hpp"

#include <algorithm>
#include <array>
#include <cmath>
#include <cstring>
#include <numbers>
#include <stdexcept>
#if defined(__SSE2__)
#include <emmintrin.h>
#endif

namespace stethogen::gen {
namespace {

constexpr double kPi = std::numbers::pi;
constexpr double kMaxCornerFraction = 0.45;  // of the sample rate

// Pre-warped analogue corner for the bilinear transform with K = 2 fs (scipy's convention).
double prewarp(double corner_hz, double fs_hz) {
  double f = std::min(corner_hz, max_corner_hz(fs_hz));
  return std::tan(kPi * f / fs_hz);  // = w_analogue / (2 fs)
}

std::complex<double> section_response(const Biquad& s, std::complex<double> z_inv) {
  std::complex<double> z2 = z_inv * z_inv;
  return (s.b0 + s.b1 * z_inv + s.b2 * z2) / (1.0 + s.a1 * z_inv + s.a2 * z2);
}

}  // namespace

double max_corner_hz(double fs_hz) { return kMaxCornerFraction * fs_hz; }

Biquad butter_lowpass1(double corner_hz, double fs_hz) {
  double k = prewarp(corner_hz, fs_hz);
  double norm = 1.0 / (1.0 + k);
  return {k * norm, k * norm, 0.0, (k - 1.0) * norm, 0.0};
}

Biquad butter_highpass1(double corner_hz, double fs_hz) {
  double k = prewarp(corner_hz, fs_hz);
  double norm = 1.0 / (1.0 + k);
  return {norm, -norm, 0.0, (k - 1.0) * norm, 0.0};
}

Biquad butter_lowpass2(double corner_hz, double fs_hz) {
  double k = prewarp(corner_hz, fs_hz);
  double k2 = k * k;
  double norm = 1.0 / (1.0 + std::numbers::sqrt2 * k + k2);
  return {k2 * norm, 2.0 * k2 * norm, k2 * norm, 2.0 * (k2 - 1.0) * norm,
          (1.0 - std::numbers::sqrt2 * k + k2) * norm};
}

Biquad butter_highpass2(double corner_hz, double fs_hz) {
  double k = prewarp(corner_hz, fs_hz);
  double k2 = k * k;
  double norm = 1.0 / (1.0 + std::numbers::sqrt2 * k + k2);
  return {norm, -2.0 * norm, norm, 2.0 * (k2 - 1.0) * norm, (1.0 - std::numbers::sqrt2 * k + k2) * norm};
}

Biquad peaking(double centre_hz, double q, double gain_db, double fs_hz) {
  double a = std::pow(10.0, gain_db / 40.0);
  double w0 = 2.0 * kPi * std::min(centre_hz, max_corner_hz(fs_hz)) / fs_hz;
  double alpha = std::sin(w0) / (2.0 * q);
  double a0 = 1.0 + alpha / a;
  return {(1.0 + alpha * a) / a0, -2.0 * std::cos(w0) / a0, (1.0 - alpha * a) / a0, -2.0 * std::cos(w0) / a0,
          (1.0 - alpha / a) / a0};
}

std::complex<double> FilterCascade::response(double frequency_hz, double fs_hz) const {
  std::complex<double> z_inv = std::polar(1.0, -2.0 * kPi * frequency_hz / fs_hz);
  std::complex<double> h = gain;
  for (const Biquad& s : sections) h *= section_response(s, z_inv);
  return h;
}

double FilterCascade::slowest_time_constant_s(double fs_hz) const {
  double largest_radius = 0.0;
  for (const Biquad& s : sections) {
    // Poles of z^2 + a1 z + a2.
    std::complex<double> disc = std::sqrt(std::complex<double>(s.a1 * s.a1 - 4.0 * s.a2));
    for (std::complex<double> p : {(-s.a1 + disc) / 2.0, (-s.a1 - disc) / 2.0})
      largest_radius = std::max(largest_radius, std::abs(p));
  }
  if (largest_radius <= 0.0) return 0.0;
  return -1.0 / (fs_hz * std::log(largest_radius));
}

void FilterCascade::append(const FilterCascade& other) {
  sections.insert(sections.end(), other.sections.begin(), other.sections.end());
  gain *= other.gain;
}

namespace {

// Section by section over the whole buffer, for cascades too long for the fused loop below.
template <typename T>
void by_section(const FilterCascade& cascade, T* data, std::size_t n, T* state) {
  for (std::size_t k = 0; k < cascade.sections.size(); ++k) {
    const Biquad s = cascade.sections[k];
    T z1 = state[2 * k], z2 = state[2 * k + 1];
    for (std::size_t i = 0; i < n; ++i) {
      T x = data[i];
      T y = s.b0 * x + z1;
      z1 = s.b1 * x - s.a1 * y + z2;
      z2 = s.b2 * x - s.a2 * y;
      data[i] = y;
    }
    state[2 * k] = z1;
    state[2 * k + 1] = z2;
  }
  if (cascade.gain != 1.0)
    for (std::size_t i = 0; i < n; ++i) data[i] = data[i] * cascade.gain;
}

// A complex sample as a pair of doubles (re, im) in one vector register (GCC vector extension:
// packed SSE2 on x86-64); real coefficients act on both lanes alike.
using Pair = double __attribute__((vector_size(16)));
template <typename T> struct Lanes { using type = T; };
template <> struct Lanes<std::complex<double>> { using type = Pair; };

// How a section's recurrence is evaluated. First-order sections (b2 = a2 = 0, the Butterworth
// first-order designs) skip the second state, whose value would be exactly zero. Those with
// b1 = b0 (low-pass) or b1 = -b0 (high-pass) form b0 x once, b1 x being it or its negation
// exactly; the high-pass keeps its state negated, w = -z1, so that y = b0 x - w and
// w' = b0 x + a1 y need no negation ((-t) - u = -(t + u) exactly). Every form gives the values
// of the general one.
enum class Form { general, first_order, low_pass, high_pass };

Form form_of(const Biquad& s) {
  if (s.b2 != 0.0 || s.a2 != 0.0) return Form::general;
  if (s.b1 == s.b0) return Form::low_pass;
  if (s.b1 == -s.b0) return Form::high_pass;
  return Form::first_order;
}
// The state as a form keeps it, and back (negation is exact).
template <typename V>
V to_kept(Form form, V z1) { return form == Form::high_pass ? -z1 : z1; }

template <typename V, typename S>
V section_step(Form form, S b0, S b1, S b2, S a1, S a2, V x, V& z1, V& z2) {
  switch (form) {
    case Form::low_pass: {
      const V t = b0 * x, y = t + z1;
      z1 = t - a1 * y;
      return y;
    }
    case Form::high_pass: {  // z1 holds -z1
      const V t = b0 * x, y = t - z1;
      z1 = t + a1 * y;
      return y;
    }
    case Form::first_order: {
      const V y = b0 * x + z1;
      z1 = b1 * x - a1 * y;
      return y;
    }
    case Form::general: break;
  }
  const V y = b0 * x + z1;
  z1 = b1 * x - a1 * y + z2;
  z2 = b2 * x - a2 * y;
  return y;
}

// All N sections per sample, coefficients and states in registers: the sections' recurrences
// overlap instead of running one after the other, and the buffer is read and written once.
// Per sample and section the values are those of by_section (section_step computes the same
// values in every form).
template <typename T, std::size_t N>
void fused(const FilterCascade& cascade, T* data, std::size_t n, T* state) {
  using V = typename Lanes<T>::type;
  static_assert(sizeof(V) == sizeof(T));
  double b0[N], b1[N], b2[N], a1[N], a2[N];
  Form form[N];
  V z1[N], z2[N];
  for (std::size_t k = 0; k < N; ++k) {
    const Biquad& s = cascade.sections[k];
    b0[k] = s.b0, b1[k] = s.b1, b2[k] = s.b2, a1[k] = s.a1, a2[k] = s.a2;
    form[k] = form_of(s);
    std::memcpy(&z1[k], &state[2 * k], sizeof(V));
    std::memcpy(&z2[k], &state[2 * k + 1], sizeof(V));
    z1[k] = to_kept(form[k], z1[k]);
  }
  const double gain = cascade.gain;
  const bool scaled = gain != 1.0;
  for (std::size_t i = 0; i < n; ++i) {
    V x;
    std::memcpy(&x, &data[i], sizeof(V));
#pragma GCC unroll 8
    for (std::size_t k = 0; k < N; ++k) x = section_step(form[k], b0[k], b1[k], b2[k], a1[k], a2[k], x, z1[k], z2[k]);
    if (scaled) x = x * gain;
    std::memcpy(static_cast<void*>(&data[i]), &x, sizeof(V));
  }
  for (std::size_t k = 0; k < N; ++k) {
    z1[k] = to_kept(form[k], z1[k]);
    std::memcpy(static_cast<void*>(&state[2 * k]), &z1[k], sizeof(V));
    std::memcpy(static_cast<void*>(&state[2 * k + 1]), &z2[k], sizeof(V));
  }
}

// C complex signals through the same N sections in lockstep, n samples each: the same
// arithmetic per signal as fused(), with C independent recurrences for the CPU to overlap.
template <std::size_t N, std::size_t C>
void fused_lanes(const FilterCascade& cascade, std::complex<double>* const* data, std::size_t n,
                 std::complex<double>* const* state) {
  double b0[N], b1[N], b2[N], a1[N], a2[N];
  Form form[N];
  Pair z1[C][N], z2[C][N];
  for (std::size_t k = 0; k < N; ++k) {
    const Biquad& s = cascade.sections[k];
    b0[k] = s.b0, b1[k] = s.b1, b2[k] = s.b2, a1[k] = s.a1, a2[k] = s.a2;
    form[k] = form_of(s);
    for (std::size_t c = 0; c < C; ++c) {
      std::memcpy(&z1[c][k], &state[c][2 * k], sizeof(Pair));
      std::memcpy(&z2[c][k], &state[c][2 * k + 1], sizeof(Pair));
      z1[c][k] = to_kept(form[k], z1[c][k]);
    }
  }
  const double gain = cascade.gain;
  const bool scaled = gain != 1.0;
  for (std::size_t i = 0; i < n; ++i) {
    Pair x[C];
#pragma GCC unroll 4
    for (std::size_t c = 0; c < C; ++c) std::memcpy(&x[c], &data[c][i], sizeof(Pair));
#pragma GCC unroll 8
    for (std::size_t k = 0; k < N; ++k) {
#pragma GCC unroll 4
      for (std::size_t c = 0; c < C; ++c)
        x[c] = section_step(form[k], b0[k], b1[k], b2[k], a1[k], a2[k], x[c], z1[c][k], z2[c][k]);
    }
#pragma GCC unroll 4
    for (std::size_t c = 0; c < C; ++c) {
      if (scaled) x[c] = x[c] * gain;
      std::memcpy(static_cast<void*>(&data[c][i]), &x[c], sizeof(Pair));
    }
  }
  for (std::size_t c = 0; c < C; ++c)
    for (std::size_t k = 0; k < N; ++k) {
      z1[c][k] = to_kept(form[k], z1[c][k]);
      std::memcpy(static_cast<void*>(&state[c][2 * k]), &z1[c][k], sizeof(Pair));
      std::memcpy(static_cast<void*>(&state[c][2 * k + 1]), &z2[c][k], sizeof(Pair));
    }
}

template <std::size_t C>
bool try_lanes(const FilterCascade& cascade, std::complex<double>* const* data, std::size_t n,
               std::complex<double>* const* state) {
  switch (cascade.sections.size()) {
    case 1: fused_lanes<1, C>(cascade, data, n, state); return true;
    case 2: fused_lanes<2, C>(cascade, data, n, state); return true;
    case 3: fused_lanes<3, C>(cascade, data, n, state); return true;
    case 4: fused_lanes<4, C>(cascade, data, n, state); return true;
    case 5: fused_lanes<5, C>(cascade, data, n, state); return true;
    default: return false;
  }
}

}  // namespace

template <typename T>
void filter_continue(const FilterCascade& cascade, T* data, std::size_t n, T* state) {
  switch (cascade.sections.size()) {
    case 0: if (cascade.gain != 1.0) for (std::size_t i = 0; i < n; ++i) data[i] = data[i] * cascade.gain; return;
    case 1: return fused<T, 1>(cascade, data, n, state);
    case 2: return fused<T, 2>(cascade, data, n, state);
    case 3: return fused<T, 3>(cascade, data, n, state);
    case 4: return fused<T, 4>(cascade, data, n, state);
    case 5: return fused<T, 5>(cascade, data, n, state);
    case 6: return fused<T, 6>(cascade, data, n, state);
    default: return by_section(cascade, data, n, state);
  }
}

template <typename T>
void filter_in_place(const FilterCascade& cascade, T* data, std::size_t n) {
  std::vector<T> rest(2 * cascade.sections.size(), T{});
  filter_continue(cascade, data, n, rest.data());
}

void filter_continue_together(const FilterCascade& cascade, std::complex<double>* const* data,
                              const std::size_t* n, std::complex<double>* const* state, std::size_t count) {
  std::size_t done = 0;
  while (done < count) {
    // kLanes signals in lockstep over their common length, the rest of each (and a signal left
    // over) on its own.
    const std::size_t lanes = std::min(kLanes, count - done);
    std::size_t common = n[done];
    for (std::size_t c = done; c < done + lanes; ++c) common = std::min(common, n[c]);
    if (lanes < kLanes || !try_lanes<kLanes>(cascade, data + done, common, state + done)) common = 0;
    for (std::size_t c = done; c < done + lanes; ++c) filter_continue(cascade, data[c] + common, n[c] - common, state[c]);
    done += lanes;
  }
}

namespace {

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

template void filter_in_place<double>(const FilterCascade&, double*, std::size_t);
template void filter_in_place<std::complex<double>>(const FilterCascade&, std::complex<double>*, std::size_t);
template void filter_continue<std::complex<double>>(const FilterCascade&, std::complex<double>*, std::size_t,
                                                     std::complex<double>*);

}  // namespace stethogen::gen
