#include "validation/measures.hpp"

#include <algorithm>
#include <cmath>
#include <complex>

#include <fftw3.h>

#include "generator/sources/heart_sounds.hpp"

namespace stethogen::validation {

double beat_mean(const gen::CirculationResult& c, const std::function<double(const gen::BeatHemodynamics&)>& f,
                 const BeatFilter& keep) {
  double sum = 0;
  int n = 0;
  for (const auto& b : c.beats) {
    if (!(b.lv_activation_s >= 0 && b.lv_activation_s < c.duration_s)) continue;
    if (keep && !keep(b)) continue;
    const double v = f(b);
    if (std::isnan(v)) continue;
    sum += v;
    ++n;
  }
  return n ? sum / n : NAN;
}

double row_mean(const Record& r, const std::function<double(const BeatRow&)>& f,
                const std::function<bool(const BeatRow&)>& keep) {
  double sum = 0;
  int n = 0;
  for (const BeatRow& b : r.beats) {
    if (keep && !keep(b)) continue;
    const double v = f(b);
    if (std::isnan(v)) continue;
    sum += v;
    ++n;
  }
  return n ? sum / n : NAN;
}

std::optional<Event> site_event(const Record& r, std::int32_t beat, EventKind kind, std::int32_t site) {
  for (const Event& e : r.events)
    if (e.beat == beat && e.kind == kind && e.site == site) return e;
  return std::nullopt;
}

std::optional<Event> heart_event(const Record& r, std::int32_t beat, EventKind kind) {
  return site_event(r, beat, kind, -1);
}

std::int32_t record_beat(const gen::CirculationResult& c, std::int32_t circulation_beat) {
  for (const gen::BeatHemodynamics& b : c.beats)
    if (b.lv_activation_s >= 0) return circulation_beat - b.beat;
  return circulation_beat;
}

std::int32_t site_index(const Record& r, Site site) {
  for (std::size_t i = 0; i < r.sites.size(); ++i)
    if (r.sites[i] == site) return static_cast<std::int32_t>(i);
  return -1;
}

double peak_abs(const Record& r, std::int32_t site, double time_s, double half_window_s) {
  const auto n = static_cast<std::int64_t>(r.pcg_clean.n_samples);
  const auto lo = std::max<std::int64_t>(0, std::llround((time_s - half_window_s) * r.sample_rate_hz));
  const auto hi = std::min<std::int64_t>(n - 1, std::llround((time_s + half_window_s) * r.sample_rate_hz));
  double peak = 0;
  for (std::int64_t i = lo; i <= hi; ++i) peak = std::max(peak, std::abs(double(r.pcg_clean.at(site, i))));
  return peak;
}

std::vector<gen::SoundComponent> components_of(const Run& run) {
  return gen::heart_sound_sources(run.circulation, gen::draw_source_variation(run.record.subject));
}

namespace {

// Periodogram |X_k|^2 of x zero-padded to nfft points (FFTW real-to-complex).
std::vector<double> power_spectrum(const std::vector<double>& x, std::size_t nfft) {
  std::vector<double> in(nfft, 0.0);
  std::copy(x.begin(), x.begin() + static_cast<std::ptrdiff_t>(std::min(x.size(), nfft)), in.begin());
  std::vector<std::complex<double>> out(nfft / 2 + 1);
  fftw_plan plan = fftw_plan_dft_r2c_1d(static_cast<int>(nfft), in.data(),
                                        reinterpret_cast<fftw_complex*>(out.data()), FFTW_ESTIMATE);
  fftw_execute(plan);
  fftw_destroy_plan(plan);
  std::vector<double> p(out.size());
  for (std::size_t k = 0; k < out.size(); ++k) p[k] = std::norm(out[k]);
  return p;
}

}  // namespace

double dominant_frequency_hz(const gen::SoundComponent& c) {
  constexpr double kRateHz = 4000.0, kResolutionHz = 0.25;
  std::vector<double> x;
  for (double t = c.start_s; t < c.support_end_s(); t += 1.0 / kRateHz) x.push_back(c.analytic(t).real());
  const auto nfft = static_cast<std::size_t>(kRateHz / kResolutionHz);
  const std::vector<double> p = power_spectrum(x, nfft);
  const auto k = static_cast<std::size_t>(std::max_element(p.begin() + 1, p.end()) - p.begin());
  return static_cast<double>(k) * kRateHz / static_cast<double>(nfft);
}

double band_energy_fraction(const float* x, std::size_t n, double rate_hz, double lo_hz, double hi_hz) {
  const std::vector<double> p = power_spectrum(std::vector<double>(x, x + n), n);
  double total = 0, band = 0;
  for (std::size_t k = 1; k < p.size(); ++k) {  // the mean (k = 0) is no sound
    const double f = static_cast<double>(k) * rate_hz / static_cast<double>(n);
    total += p[k];
    if (f >= lo_hz && f <= hi_hz) band += p[k];
  }
  return total > 0 ? band / total : NAN;
}

double pearson(const std::vector<double>& x, const std::vector<double>& y) {
  const std::size_t n = std::min(x.size(), y.size());
  if (n < 3) return NAN;
  double mx = 0, my = 0;
  for (std::size_t i = 0; i < n; ++i) mx += x[i] / n, my += y[i] / n;
  double sxy = 0, sxx = 0, syy = 0;
  for (std::size_t i = 0; i < n; ++i) {
    sxy += (x[i] - mx) * (y[i] - my);
    sxx += (x[i] - mx) * (x[i] - mx);
    syy += (y[i] - my) * (y[i] - my);
  }
  return (sxx > 0 && syy > 0) ? sxy / std::sqrt(sxx * syy) : NAN;
}

int monotone_steps(const std::vector<double>& v, int sign) {
  int n = 0;
  for (std::size_t i = 1; i < v.size(); ++i) n += sign > 0 ? v[i] > v[i - 1] : v[i] < v[i - 1];
  return n;
}

}  // namespace stethogen::validation
