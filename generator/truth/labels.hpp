// Four-state segmentation labels (core/types.hpp Label) of one site: inside an S1 -> 1, inside an
// S2 -> 3, between sounds the ventricles' phase: systole -> 2 from an S1 to the next S2, diastole
// -> 4 from an S2 to the next S1 (docs/sounds.md, "Labels"). The sounds are taken in the order of
// their onsets; where they overlap, the later one takes over at its onset. Where two sounds of
// one kind follow each other (at fast rates S2 of one beat and S1 of the next overlap or swap,
// or a sound is missing at the site), the engine's valve closures give the phase: after an S1,
// systole lasts until the first semilunar closure in the gap, then diastole; after an S2,
// diastole lasts until the first AV closure in the gap, then systole. A same-kind gap without
// such a closure (left and right heart far out of step at fast rates) changes phase halfway, a
// convention that keeps the cycle's order. Samples stay 0 only before the first and after the
// last sound.
#pragma once

#include <cstdint>
#include <vector>

namespace stethogen::gen {

struct LabelledSound {
  bool is_s1 = true;
  double onset_s = 0, offset_s = 0;
};

// The engine's closure instants of the AV (mitral, tricuspid) and semilunar (aortic, pulmonic)
// valves, record seconds, any order.
struct ValveClosures {
  std::vector<double> av_s, semilunar_s;
};

// Labels of samples i = 0..n-1 at times i / rate_hz; sample i is inside [a, b) when
// a <= i / rate_hz < b. sounds need not be sorted.
void label_states(std::vector<LabelledSound> sounds, ValveClosures closures, double rate_hz, std::uint8_t* labels,
                  std::size_t n);

}  // namespace stethogen::gen
