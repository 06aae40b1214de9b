// Truth at the heart level (site -1): the components as the sources emit them, before any
// transmission. Component times are closed-form crossings of the envelope; an S1 or S2 spans
// its components (earliest onset to latest offset) and peaks where their summed quadrature
// waveform has the largest magnitude.
#pragma once

#include <vector>

#include "generator/sources/component.hpp"
#include "generator/transmission/render.hpp"
#include "generator/truth/envelope_timing.hpp"

namespace stethogen::gen {

SoundTiming heart_level_timing(const SoundComponent& component);
SoundTiming heart_level_group_timing(const SoundGroup& group, const std::vector<SoundComponent>& components);

}  // namespace stethogen::gen
