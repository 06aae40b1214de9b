#include "generator/transmission/biquad.hpp"

#include <algorithm>
#include <cmath>
#include <cstring>
#include <numbers>
#include "generator/transmission/portable_extra.hpp"

namespace stethogen::gen {
namespace {

constexpr double kPi = std::numbers::pi;
constexpr double kMaxCornerFraction = 0.45;  // of the sample rate

// Pre-warped analogue corner for the bilinear transform with K = 2 fs (scipy's convention).
double prewarp(double corner_hz, double fs_hz) {
  double f = std::min(corner_hz, max_corner_hz(fs_hz));
  return portable_extra::tan(kPi * f / fs_hz);  // = w_analogue / (2 fs)
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
  double a = portable::pow(10.0, gain_db / 40.0);
  double w0 = 2.0 * kPi * std::min(centre_hz, max_corner_hz(fs_hz)) / fs_hz;
  double alpha = portable::sin(w0) / (2.0 * q);
  double a0 = 1.0 + alpha / a;
  return {(1.0 + alpha * a) / a0, -2.0 * portable::cos(w0) / a0, (1.0 - alpha * a) / a0, -2.0 * portable::cos(w0) / a0,
          (1.0 - alpha / a) / a0};
}

std::complex<double> FilterCascade::response(double frequency_hz, double fs_hz) const {
  std::complex<double> z_inv = portable_extra::polar(1.0, -2.0 * kPi * frequency_hz / fs_hz);
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
  return -1.0 / (fs_hz * portable::log(largest_radius));
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

template void filter_in_place<double>(const FilterCascade&, double*, std::size_t);
template void filter_in_place<std::complex<double>>(const FilterCascade&, std::complex<double>*, std::size_t);
template void filter_continue<std::complex<double>>(const FilterCascade&, std::complex<double>*, std::size_t,
                                                     std::complex<double>*);

}  // namespace stethogen::gen
