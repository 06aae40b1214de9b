#include "generator/truth/labels.hpp"

#include <algorithm>
#include <cmath>

#include "core/types.hpp"

namespace stethogen::gen {
namespace {

// First sample index at or after time t, clamped to [0, n].
std::size_t first_sample_at(double t, double rate_hz, std::size_t n) {
  double k = std::ceil(t * rate_hz);
  if (k <= 0) return 0;
  if (k >= static_cast<double>(n)) return n;
  return static_cast<std::size_t>(k);
}

void fill(std::uint8_t* labels, std::size_t from, std::size_t to, Label value) {
  if (to > from) std::fill(labels + from, labels + to, static_cast<std::uint8_t>(value));
}

// The first instant of sorted times in [from_s, to_s), or NaN.
double first_between(const std::vector<double>& times_s, double from_s, double to_s) {
  auto it = std::lower_bound(times_s.begin(), times_s.end(), from_s);
  return it != times_s.end() && *it < to_s ? *it : NAN;
}

}  // namespace

void label_states(std::vector<LabelledSound> sounds, ValveClosures closures, double rate_hz, std::uint8_t* labels,
                  std::size_t n) {
  std::fill(labels, labels + n, static_cast<std::uint8_t>(Label::unlabelled));
  std::sort(sounds.begin(), sounds.end(),
            [](const LabelledSound& a, const LabelledSound& b) { return a.onset_s < b.onset_s; });
  std::sort(closures.av_s.begin(), closures.av_s.end());
  std::sort(closures.semilunar_s.begin(), closures.semilunar_s.end());
  for (std::size_t i = 0; i < sounds.size(); ++i) {
    const LabelledSound& a = sounds[i];
    const LabelledSound* b = i + 1 < sounds.size() ? &sounds[i + 1] : nullptr;
    std::size_t on = first_sample_at(a.onset_s, rate_hz, n);
    std::size_t next_on = b ? first_sample_at(b->onset_s, rate_hz, n) : n;
    std::size_t off = std::clamp(first_sample_at(a.offset_s, rate_hz, n), on, next_on);
    fill(labels, on, off, a.is_s1 ? Label::s1 : Label::s2);
    if (!b) continue;
    const Label after = a.is_s1 ? Label::systole : Label::diastole;
    if (b->is_s1 != a.is_s1) {
      fill(labels, off, next_on, after);
      continue;
    }
    // Same kind: the phase changes at the other valve pair's first closure in the gap, or
    // halfway through the gap if the engine has none there.
    double gap_begin_s = std::min(a.offset_s, b->onset_s);
    double change_s = first_between(a.is_s1 ? closures.semilunar_s : closures.av_s, gap_begin_s, b->onset_s);
    if (std::isnan(change_s)) change_s = 0.5 * (gap_begin_s + b->onset_s);
    std::size_t change = std::clamp(first_sample_at(change_s, rate_hz, n), off, next_on);
    fill(labels, off, change, after);
    fill(labels, change, next_on, a.is_s1 ? Label::diastole : Label::systole);
  }
}

}  // namespace stethogen::gen
