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

void SoundComponent::render(double t_first_s, double rate_hz, std::size_t n, double weight,
                            std::complex<double>* out) const {
  constexpr std::size_t kBlock = 256;  // exact re-anchoring keeps the recurrences' drift ~1e-14
  const double h = 1.0 / rate_hz;
  const double decay = std::exp(-h / tau_s), chirp_decay = std::exp(-h / chirp_tau_s);
  const double sweep_cycles = (f_start_hz - f_end_hz) * chirp_tau_s;
  std::size_t i = 0;
  while (i < n) {
    double t = t_first_s + static_cast<double>(i) * h - start_s;
    if (t <= 0) {
      out[i++] = {0.0, 0.0};
      continue;
    }
    double tail = std::exp(kEnvelopeOrder - t / tau_s);  // exp(k - x)
    double chirp = std::exp(-t / chirp_tau_s);
    for (std::size_t end = std::min(n, i + kBlock); i < end; ++i) {
      t = t_first_s + static_cast<double>(i) * h - start_s;
      double r = t / (kEnvelopeOrder * tau_s);
      double cycles = f_end_hz * t + sweep_cycles * (1.0 - chirp);
      out[i] = std::polar(weight * amplitude * r * r * tail, 2.0 * std::numbers::pi * cycles);
      tail *= decay;
      chirp *= chirp_decay;
    }
  }
}

double SoundComponent::support_end_s() const { return start_s + kSupportX * tau_s; }
double SoundComponent::onset_s() const { return start_s + kOnsetX * tau_s; }
double SoundComponent::peak_s() const { return start_s + kEnvelopeOrder * tau_s; }
double SoundComponent::offset_s() const { return start_s + kOffsetX * tau_s; }

}  // namespace stethogen::gen
