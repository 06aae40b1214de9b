// The chest wall between the heart and the sensor: a low-pass whose attenuation grows with the
// soft-tissue thickness (model and grounding in docs/sounds.md, "Chest wall").
#pragma once

#include "generator/transmission/biquad.hpp"

namespace stethogen::gen {

// Two first-order low-pass poles whose corners fall in inverse proportion to the thickness,
// plus a flat loss per millimetre: about -6 dB/octave above the first corner and -12 dB/octave
// above the second, the range reported for the canine chest wall above 100 Hz (from memory).
FilterCascade chest_wall_filter(double thickness_mm, double fs_hz);

// The corner frequencies (Hz) and flat gain the filter is designed from, for documentation and tests.
struct ChestWallDesign {
  double first_corner_hz = 0;
  double second_corner_hz = 0;
  double flat_gain = 1;
};
ChestWallDesign chest_wall_design(double thickness_mm);

}  // namespace stethogen::gen
