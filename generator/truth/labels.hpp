// Four-state segmentation labels (core/types.hpp Label) from a site's S1 and S2 intervals:
// inside an S1 -> 1, from an S1's offset to the next S2's onset -> 2 (systole), inside an
// S2 -> 3, from an S2's offset to the next S1's onset -> 4 (diastole). A gap not bounded by
// S1 then S2 (or S2 then S1), and any time before the first or after the last sound, stays 0.
// Where sounds overlap, the later one takes over at its onset.
#pragma once

#include <cstdint>
#include <vector>

namespace stethogen::gen {

struct LabelledSound {
  bool is_s1 = true;
  double onset_s = 0, offset_s = 0;
};

// Labels of samples i = 0..n-1 at times i / rate_hz; sample i is inside [onset, offset) when
// onset <= i / rate_hz < offset. sounds need not be sorted.
void label_states(std::vector<LabelledSound> sounds, double rate_hz, std::uint8_t* labels, std::size_t n);

}  // namespace stethogen::gen
