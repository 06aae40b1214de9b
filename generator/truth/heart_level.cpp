#include "generator/truth/heart_level.hpp"

#include <algorithm>
#include <complex>
#include "generator/transmission/portable_extra.hpp"

namespace stethogen::gen {
namespace {
// Grid for the combined envelope; the peak is refined by a parabola, so 0.125 ms is ample.
constexpr double kHeartGridHz = 8000.0;

// e(x) = (x/k)^k exp(k - x) of component.hpp, k = 2.
double envelope_shape(double x) { return x <= 0 ? 0.0 : 0.25 * x * x * portable::exp(2.0 - x); }

// The x where e(x) crosses fraction (< 1) on the rising or falling side, to within 2^-40 of the range.
double crossing(double fraction, bool rising) {
  double lo = rising ? 0.0 : kEnvelopeOrder, hi = rising ? kEnvelopeOrder : 200.0;
  for (int i = 0; i < 40; ++i) {
    double mid = 0.5 * (lo + hi);
    if ((envelope_shape(mid) < fraction) == rising) lo = mid; else hi = mid;
  }
  return rising ? lo : hi;  // the outer end, so the window never shrinks
}

}  // namespace

SoundTiming heart_level_timing(const SoundComponent& c) {
  SoundTiming t;
  if (!(c.amplitude > 0)) return t;
  t.onset_s = c.onset_s();
  t.peak_s = c.peak_s();
  t.offset_s = c.offset_s();
  t.peak_envelope = c.amplitude;
  return t;
}

SoundTiming heart_level_group_timing(const SoundGroup& group, const std::vector<SoundComponent>& components) {
  double begin = INFINITY, end = -INFINITY;
  for (std::size_t m : group.members) {
    begin = std::min(begin, components[m].start_s);
    end = std::max(end, components[m].support_end_s());
  }
  if (!(end > begin)) return {};
  const auto n = static_cast<std::size_t>((end - begin) * kHeartGridHz) + 2;

  // The peak of |sum z| lies where the members' envelopes add up to at least its value, which is
  // at least `peak_floor`: half the summed waveform's magnitude at the members' own peaks (the grid
  // maximum is within a few per cent of any point's). Only that window of the grid is rendered:
  // there some member's envelope reaches peak_floor / members.
  double peak_floor = 0;
  for (std::size_t m : group.members) {
    std::complex<double> z;
    for (std::size_t j : group.members) z += components[j].analytic(components[m].peak_s());
    peak_floor = std::max(peak_floor, 0.5 * std::abs(z));
  }
  double window_begin = INFINITY, window_end = -INFINITY;
  for (std::size_t m : group.members) {
    const SoundComponent& c = components[m];
    double fraction = peak_floor / (static_cast<double>(group.members.size()) * c.amplitude);
    if (!(c.amplitude > 0) || fraction >= 1.0) continue;
    window_begin = std::min(window_begin, c.start_s + crossing(fraction, true) * c.tau_s);
    window_end = std::max(window_end, c.start_s + crossing(fraction, false) * c.tau_s);
  }
  // Grid indices of the window, two samples wider so that the parabola has its neighbours.
  std::size_t i_lo = 0, i_hi = n;
  if (window_begin < window_end) {
    i_lo = static_cast<std::size_t>(std::clamp(std::floor((window_begin - begin) * kHeartGridHz) - 2.0, 0.0,
                                               static_cast<double>(n)));
    i_hi = static_cast<std::size_t>(std::clamp(std::ceil((window_end - begin) * kHeartGridHz) + 3.0,
                                               static_cast<double>(i_lo), static_cast<double>(n)));
  }
  const std::size_t len = i_hi - i_lo;
  const double t_lo = begin + static_cast<double>(i_lo) / kHeartGridHz;
  std::vector<std::complex<double>> sum(len), part(len);
  for (std::size_t m : group.members) {
    components[m].render(t_lo, kHeartGridHz, len, 1.0, part.data());
    for (std::size_t i = 0; i < len; ++i) sum[i] += part[i];
  }
  std::vector<double> power(len);
  for (std::size_t i = 0; i < len; ++i) power[i] = std::norm(sum[i]);
  SoundTiming out = measure_power(power.data(), len, t_lo, kHeartGridHz, kEnvelopeThreshold);
  if (!out.valid()) return out;
  out.onset_s = INFINITY;
  out.offset_s = -INFINITY;
  for (std::size_t m : group.members) {
    SoundTiming c = heart_level_timing(components[m]);
    if (!c.valid()) continue;
    out.onset_s = std::min(out.onset_s, c.onset_s);
    out.offset_s = std::max(out.offset_s, c.offset_s);
  }
  return out;
}

}  // namespace stethogen::gen
