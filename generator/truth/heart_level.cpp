#include "generator/truth/heart_level.hpp"

#include <algorithm>
#include <complex>

namespace stethogen::gen {
namespace {
// Grid for the combined envelope; the peak is refined by a parabola, so 0.125 ms is ample.
constexpr double kHeartGridHz = 8000.0;
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
  auto n = static_cast<std::size_t>((end - begin) * kHeartGridHz) + 2;
  std::vector<std::complex<double>> sum(n), part(n);
  for (std::size_t m : group.members) {
    components[m].render(begin, kHeartGridHz, n, 1.0, part.data());
    for (std::size_t i = 0; i < n; ++i) sum[i] += part[i];
  }
  std::vector<double> envelope(n);
  for (std::size_t i = 0; i < n; ++i) envelope[i] = std::sqrt(std::norm(sum[i]));
  SoundTiming out = measure_envelope(envelope.data(), n, begin, kHeartGridHz, kEnvelopeThreshold);
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
