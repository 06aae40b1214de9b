// Adds the labelled noise processes of a record's noise profile to its clean multi-site signal,
// scaled to the record's drawn SNR (definition in docs/noise.md).
#pragma once

#include <functional>
#include <string>
#include <vector>

#include "core/record.hpp"
#include "core/subject.hpp"

namespace stethogen::noise {

struct NoiseInputs {
  const SubjectSpec* subject = nullptr;  // seed, record index, snr_db, noise_profile, sites
  int sample_rate_hz = 0;
  const SiteArray<float>* clean = nullptr;    // at the sensor, before output gain and clipping
  std::function<double(double time_s)> resp_phase;  // [0, 1), 0 = start of inspiration
  double inspiration_fraction = 0.4;          // phase < this is inspiration
};

struct NoiseOutput {
  SiteArray<float> noisy;                 // same shape as clean
  std::vector<Artifact> artifacts;        // non-stationary events
  std::vector<std::string> stationary;    // stationary processes that were active
  double snr_target_db = 0;               // NaN when no noise is configured
  double snr_achieved_db = 0;             // NaN when no noise is configured
};

// No profile or no SNR: noisy is a bit-identical copy of clean and the SNRs are NaN.
NoiseOutput add_noise(const NoiseInputs& in);

}  // namespace stethogen::noise
