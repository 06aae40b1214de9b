// From the heart to the four auscultation areas: per-site weight and delay of each component,
// then the chest wall and the sensor (docs/sounds.md, "Transmission").
#pragma once

#include <array>
#include <vector>

#include "core/subject.hpp"
#include "generator/sources/source_laws.hpp"
#include "generator/transmission/biquad.hpp"

namespace stethogen::gen {

// Sensor output (full-scale units) per heart-level amplitude unit before chest wall and sensor
// shape: a healthy resting S1 peaks near -15 dBFS at the mitral area (electronic sensor, 0 dB
// gain), leaving headroom for the loudest exercise S1 with the bell.
inline constexpr double kFullScalePerAmplitudeUnit = 0.2;

struct SitePath {
  Site site = Site::mitral;
  std::array<double, kComponentCount> weight{};   // amplitude re the heart level
  std::array<double, kComponentCount> delay_s{};
  FilterCascade filter;                           // chest wall, sensor, calibration
};

struct TransmissionPlan {
  int sample_rate_hz = 0;
  std::vector<SitePath> sites;      // in the order of SubjectSpec::sites
  double filter_tail_s = 0;         // rendering keeps this much after a component's support
};

// Population-typical weight and delay of a component at a site (before subject variation).
double nominal_site_weight(EventKind component, Site site);
double nominal_site_delay_s(EventKind component, Site site);

// The subject's plan: nominal paths with log-normal weight variation (SD 0.1) and delay
// variation (SD 0.3 ms, within +-1 ms) from RandomStream(seed, index, Stream::transmission),
// the chest-wall filter for params.chest_wall_mm and the sensor response.
TransmissionPlan plan_transmission(const SubjectSpec& subject);

}  // namespace stethogen::gen
