// SubjectSpec: everything the pipeline needs to synthesise one record, drawn by the plan
// (recipe/plan.hpp). A record is a pure function of its SubjectSpec: the same spec gives the
// same samples whatever the thread or shard.
#pragma once

#include <cstdint>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "core/types.hpp"

namespace stethogen {

namespace noise {
struct NoiseProfile;  // noise/profile.hpp
}

// Drawn subject parameters. std::nullopt means "the state's own default" (generator/states).
struct SubjectParams {
  double duration_s = 30.0;                         // recorded length, after the run-in
  std::optional<double> heart_rate_bpm;             // resting rate before state effects
  double respiration_rate_per_min = 15.0;
  double respiration_depth_mmhg = 3.0;              // peak-to-peak pleural pressure swing
  double rsa_fraction = 0.03;                       // respiratory sinus arrhythmia, peak RR modulation
  double lf_fraction = 0.02;                        // 0.04-0.15 Hz HRV component, peak RR modulation
  double blood_volume_ml = 5000.0;                  // total blood volume
  double pr_interval_ms = 160.0;                    // atrial to ventricular activation
  double lv_rv_delay_ms = 0.0;                      // RV activation minus LV activation
  double chest_wall_mm = 20.0;                      // soft-tissue thickness under the sensor
  std::optional<double> snr_db;                     // nullopt: no noise at all
  double sensor_gain_db = 0.0;                      // extra gain before quantisation
  double source_variation = 0.1;                    // SD of per-component loudness jitter (log scale)
};

struct SubjectSpec {
  std::uint64_t dataset_seed = 0;
  std::uint64_t record_index = 0;     // position in the whole dataset, keys all random streams
  std::string record_id;              // e.g. "r000042"
  std::string population;             // population name (sweep-expanded names included)
  std::uint32_t population_index = 0;
  State state = State::rest;
  double exercise_intensity = 0.0;    // [0, 1], exercise only
  double severity = 0.0;              // [0, 1], failure states only
  int sample_rate_hz = 4000;
  std::vector<Site> sites;
  Sensor sensor = Sensor::acoustic_diaphragm;
  SampleFormat sample_format = SampleFormat::float32;
  SubjectParams params;
  std::string noise_profile_name;                          // empty: none
  std::shared_ptr<const noise::NoiseProfile> noise_profile;  // null: none
};

}  // namespace stethogen
