// The noise processes, each generated at a unit level from its own random streams; mix.cpp
// sets the relative levels, scales the sum to the SNR and writes the artifact table.
#pragma once

#include <cstdint>
#include <functional>
#include <string>
#include <vector>

#include "core/random.hpp"
#include "core/record.hpp"
#include "core/types.hpp"
#include "noise/profile.hpp"

namespace stethogen::noise {

// Fixed per process kind: stream id = noise_base + 16 * kind + sub, where sub 0 is the shared
// (all-site) stream, 1 + Site the stream of one site and 15 the local-field stream (see
// spread_over_sites). Adding a process or a site leaves every other stream untouched.
enum class ProcessKind : std::uint32_t {
  sensor_white = 0, ambient = 1, breath = 2, friction = 3, motion = 4, hum = 5, dropout = 6,
  recording_first = 7,  // recording i uses 7 + i
};

struct ProcessContext {
  std::uint64_t seed = 0;
  std::uint64_t record_index = 0;
  double sample_rate_hz = 0;
  std::size_t n_samples = 0;
  std::vector<Site> sites;

  // Arrays of the record's shape that the mixer has added and handed back, for the next
  // process to write into instead of allocating and zero-filling its own.
  mutable std::vector<SiteArray<float>> spare;

  // A sites x samples array for a process that writes every sample (contents unspecified).
  SiteArray<float> array_to_overwrite() const;

  RandomStream shared_stream(ProcessKind kind, std::uint32_t kind_offset = 0) const;
  RandomStream site_stream(ProcessKind kind, std::size_t site_index, std::uint32_t kind_offset = 0) const;
  RandomStream local_stream(ProcessKind kind) const;
  double duration_s() const { return n_samples / sample_rate_hz; }
};

// A non-stationary event: samples [onset, offset) at one site (index into the record's sites).
struct Burst {
  std::int32_t site = 0;
  std::size_t onset = 0, offset = 0;
};

// One process's signal at every site. Each burst of an event process has unit power over its
// own interval; stationary processes come at whatever level they are made, and the mixer
// scales each to unit mean power over all sites and samples.
struct Contribution {
  std::string label;  // stationary name ("ambient_pink") or artifact kind ("friction")
  bool stationary = true;
  SiteArray<float> samples;
  std::vector<Burst> bursts;
  double mean_power = -1;  // of samples, to about 1e-6, where the process measured it (else < 0)
};

// A field heard at every site: row s = g_s * envelope * (sqrt(c) * shared + sqrt(1 - c) * local_s)
// with c the coherence (shared power fraction), shared and local of unit power, and g_s a
// per-site level within +-spread_db. The local parts are one further synthesis, circularly
// shifted by (1 + Site) / 5 of the record: for noise whose correlation time is far below a
// second, practically independent per site at the cost of one synthesis instead of one per
// site. response: amplitude_response of length ctx.n_samples; envelope may be null (flat).
// Returns the mean power of out (to about 1e-6).
double spread_over_sites(const ProcessContext& ctx, ProcessKind kind, double coherence, double spread_db,
                       const std::vector<float>& response, const float* envelope, SiteArray<float>& out);

Contribution sensor_noise(const ProcessContext& ctx);
Contribution ambient_noise(const ProcessContext& ctx, const AmbientNoise& cfg);
Contribution hum_noise(const ProcessContext& ctx, const HumNoise& cfg);
Contribution recording_noise(const ProcessContext& ctx, const RecordingNoise& cfg, std::size_t index);

// resp_phase(t) in [0, 1) with 0 the start of inspiration; phase < inspiration_fraction inspires.
Contribution breath_noise(const ProcessContext& ctx, const BreathNoise& cfg,
                          const std::function<double(double time_s)>& resp_phase, double inspiration_fraction);

Contribution friction_noise(const ProcessContext& ctx, const FrictionNoise& cfg);
// With cfg.clip the bursts have peak 1 instead of unit power (scaled to peak_fs by the mixer).
Contribution motion_noise(const ProcessContext& ctx, const MotionNoise& cfg);

// Dropout intervals per site, and the gain they impose (1 outside, depth inside, 5 ms ramps).
std::vector<Burst> dropout_intervals(const ProcessContext& ctx, const DropoutNoise& cfg);
SiteArray<float> dropout_gain(const ProcessContext& ctx, const DropoutNoise& cfg, const std::vector<Burst>& intervals);

// Poisson arrivals (exponential gaps) at rate_per_min with durations uniform in duration_ms.
std::vector<Burst> poisson_bursts(RandomStream& rng, const ProcessContext& ctx, std::int32_t site,
                                  double rate_per_min, Range duration_ms);

}  // namespace stethogen::noise
