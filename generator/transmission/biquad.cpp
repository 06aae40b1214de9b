#include "generator/transmission/biquad.hpp"

#include <algorithm>
#include <cmath>
#include <numbers>

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

template <typename T>
void filter_in_place(const FilterCascade& cascade, T* data, std::size_t n) {
  // Section by section over the whole buffer; first-order sections (b2 = a2 = 0, the Butterworth
  // first-order designs) skip the second state, whose value would be exactly zero.
  for (const Biquad& s : cascade.sections) {
    T z1{}, z2{};
    if (s.b2 == 0.0 && s.a2 == 0.0) {
      for (std::size_t i = 0; i < n; ++i) {
        T x = data[i];
        T y = s.b0 * x + z1;
        z1 = s.b1 * x - s.a1 * y;
        data[i] = y;
      }
      continue;
    }
    for (std::size_t i = 0; i < n; ++i) {
      T x = data[i];
      T y = s.b0 * x + z1;
      z1 = s.b1 * x - s.a1 * y + z2;
      z2 = s.b2 * x - s.a2 * y;
      data[i] = y;
    }
  }
  if (cascade.gain != 1.0)
    for (std::size_t i = 0; i < n; ++i) data[i] = data[i] * cascade.gain;
}

template void filter_in_place<double>(const FilterCascade&, double*, std::size_t);
template void filter_in_place<std::complex<double>>(const FilterCascade&, std::complex<double>*, std::size_t);

}  // namespace stethogen::gen
