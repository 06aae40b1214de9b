// Renders the components to each site (weight, delay, chest wall, sensor) at the record rate and
// measures every component's and every S1/S2's timing at each site on the way.
#pragma once

#include <vector>

#include "core/record.hpp"
#include "generator/sources/component.hpp"
#include "generator/transmission/sites.hpp"
#include "generator/truth/envelope_timing.hpp"

namespace stethogen::gen {

// Sounds of one beat rendered together: S1 (M1 + T1), S2 (A2 + P2), or S3 / S4 alone.
struct SoundGroup {
  EventKind kind = EventKind::S1;
  std::int32_t beat = 0;
  std::vector<std::size_t> members;  // indices into the component list
};
std::vector<SoundGroup> group_components(const std::vector<SoundComponent>& components);

struct Rendering {
  SiteArray<float> clean;                                 // [site][sample], at the sensor
  std::vector<std::vector<SoundTiming>> component_timing;  // [component][site]
  std::vector<std::vector<SoundTiming>> group_timing;      // [group][site]; onset/offset = members' extremes
};

// Each group is synthesised on its own segment from a zero filter state and kept for
// plan.filter_tail_s after its support, so the sum over groups is the filtered sum of the
// components (linearity) up to a residue below exp(-12) of the slowest pole.
Rendering render_sites(const std::vector<SoundComponent>& components, const std::vector<SoundGroup>& groups,
                       const TransmissionPlan& plan, std::size_t n_samples);

}  // namespace stethogen::gen
