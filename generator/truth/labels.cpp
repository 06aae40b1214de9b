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

}  // namespace

void label_states(std::vector<LabelledSound> sounds, double rate_hz, std::uint8_t* labels, std::size_t n) {
  std::fill(labels, labels + n, static_cast<std::uint8_t>(Label::unlabelled));
  std::sort(sounds.begin(), sounds.end(),
            [](const LabelledSound& a, const LabelledSound& b) { return a.onset_s < b.onset_s; });
  for (std::size_t i = 0; i < sounds.size(); ++i) {
    const LabelledSound& a = sounds[i];
    const LabelledSound* b = i + 1 < sounds.size() ? &sounds[i + 1] : nullptr;
    std::size_t on = first_sample_at(a.onset_s, rate_hz, n);
    std::size_t off = first_sample_at(a.offset_s, rate_hz, n);
    std::size_t next_on = b ? first_sample_at(b->onset_s, rate_hz, n) : n;
    fill(labels, on, std::min(off, next_on), a.is_s1 ? Label::s1 : Label::s2);
    if (b && b->is_s1 != a.is_s1) fill(labels, off, next_on, a.is_s1 ? Label::systole : Label::diastole);
  }
}

}  // namespace stethogen::gen
