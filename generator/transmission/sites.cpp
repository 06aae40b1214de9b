#include "generator/transmission/sites.hpp"

#include <algorithm>
#include <cmath>

#include "core/random.hpp"
#include "generator/transmission/chest_wall.hpp"
#include "generator/transmission/sensor.hpp"
#include "generator/transmission/portable_extra.hpp"

namespace stethogen::gen {
namespace {

// Rows: M1 T1 A2 P2 S3 S4; columns: aortic, pulmonic, tricuspid, mitral (Site order).
// Each component is loudest where it is classically best heard (trade fact): M1 at the mitral
// area (apex), T1 at the tricuspid area (left lower sternal border), A2 everywhere and most at
// the aortic area, P2 mainly at the pulmonic area, the LV filling sounds S3/S4 at the apex.
constexpr double kWeight[kComponentCount][4] = {
    {0.45, 0.40, 0.60, 1.00},  // M1
    {0.30, 0.40, 1.00, 0.50},  // T1
    {1.00, 0.50, 0.60, 0.55},  // A2
    {0.30, 1.00, 0.35, 0.20},  // P2
    {0.20, 0.25, 0.50, 1.00},  // S3
    {0.20, 0.25, 0.50, 1.00},  // S4
};
// Milliseconds: a few ms more the farther the area lies from the source (docs/sounds.md).
constexpr double kDelayMs[kComponentCount][4] = {
    {3.0, 3.0, 2.0, 1.0},  // M1
    {3.0, 2.5, 1.0, 2.5},  // T1
    {1.0, 1.5, 2.5, 3.0},  // A2
    {2.0, 1.0, 2.5, 3.5},  // P2
    {4.0, 3.5, 2.0, 1.0},  // S3
    {4.0, 3.5, 2.0, 1.0},  // S4
};

constexpr double kWeightVariationSd = 0.1;
constexpr double kDelayVariationSdMs = 0.3;
constexpr double kDelayVariationLimitMs = 1.0;
constexpr double kTailTimeConstants = 12.0;  // filter tail kept: exp(-12) of the slowest pole

}  // namespace

double nominal_site_weight(EventKind component, Site site) {
  return kWeight[component_index(component)][static_cast<int>(site)];
}

double nominal_site_delay_s(EventKind component, Site site) {
  return 1e-3 * kDelayMs[component_index(component)][static_cast<int>(site)];
}

TransmissionPlan plan_transmission(const SubjectSpec& subject) {
  TransmissionPlan plan;
  plan.sample_rate_hz = subject.sample_rate_hz;
  const double fs = subject.sample_rate_hz;
  FilterCascade shared = chest_wall_filter(subject.params.chest_wall_mm, fs);
  shared.append(sensor_response(subject.sensor, fs));
  shared.gain *= kFullScalePerAmplitudeUnit;
  plan.filter_tail_s = kTailTimeConstants * shared.slowest_time_constant_s(fs);

  RandomStream rng(subject.dataset_seed, subject.record_index, Stream::transmission);
  for (Site site : subject.sites) {
    SitePath path;
    path.site = site;
    path.filter = shared;
    for (int c = 0; c < kComponentCount; ++c) {
      auto kind = static_cast<EventKind>(c);
      path.weight[c] = nominal_site_weight(kind, site) * portable::exp(kWeightVariationSd * rng.normal());
      double jitter_ms = rng.truncated_normal(0.0, kDelayVariationSdMs, -kDelayVariationLimitMs,
                                              kDelayVariationLimitMs);
      path.delay_s[c] = nominal_site_delay_s(kind, site) + 1e-3 * jitter_ms;
    }
    plan.sites.push_back(std::move(path));
  }
  return plan;
}

}  // namespace stethogen::gen
