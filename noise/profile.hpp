// A noise profile: which labelled noise processes a record gets and their parameters, parsed
// from a recipe's [noise.<name>] table (reference: docs/noise.md). Levels are relative between
// processes; add_noise (noise/mix.hpp) scales the sum to the record's drawn SNR.
#pragma once

#include <memory>
#include <string>
#include <string_view>
#include <vector>

namespace toml {
inline namespace v3 {
class table;
}
}  // namespace toml

namespace stethogen::noise {

enum class NoiseColor { white, pink, brown, band };

// A [lo, hi] pair: frequencies in Hz or durations in ms.
struct Range {
  double lo = 0;
  double hi = 0;
};

// Sensor self-noise: white, independent at each site; also the floor left during dropouts.
struct SensorNoise {
  bool enabled = false;
  double level_db = -10;
};

// Ambient room noise reaching every site, mostly shared between sites.
struct AmbientNoise {
  bool enabled = false;
  NoiseColor color = NoiseColor::pink;
  double level_db = 0;
  Range band_hz{100, 400};     // band colour only
  double low_corner_hz = 5;    // pink/brown are flat below this (keeps sub-Hz drift bounded)
  double site_coherence = 0.9; // fraction of the power shared by all sites, [0, 1]
};

// Breath sounds at the chest wall, following the respiration phase (Gavriely et al. 1995).
struct BreathNoise {
  bool enabled = false;
  double level_db = -3;
  double corner_hz = 200;               // flat below, falling above
  double slope_db_per_octave = -14;     // power slope above the corner (inspiration)
  double upper_hz = 900;                // upper limit: steep extra roll-off above
  double expiration_db = -8;            // expiratory level relative to inspiratory
  double site_coherence = 0.5;
};

// Contact friction bursts: broadband, random onsets (Poisson) and durations, per site.
struct FrictionNoise {
  bool enabled = false;
  double rate_per_min = 2;
  Range duration_ms{30, 200};
  double level_db = 6;                  // power during a burst
};

// Motion transients: large, low-frequency, per site; with clip they reach peak_fs.
struct MotionNoise {
  bool enabled = false;
  double rate_per_min = 0.5;
  Range duration_ms{200, 1000};
  double level_db = 20;                 // power during a transient (clip = false)
  double max_frequency_hz = 15;
  bool clip = false;                    // set the peak in sensor full-scale units instead
  double peak_fs = 1.5;                 // peak with clip = true; full scale is 1.0
};

// Powerline hum: mains frequency plus harmonics, slowly drifting level, all sites.
struct HumNoise {
  bool enabled = false;
  double frequency_hz = 50;             // 50 or 60
  int harmonics = 3;                    // harmonics above the fundamental
  double harmonic_step_db = -6;         // level change per harmonic number
  double level_db = -6;
  double drift = 0.2;                   // peak fractional amplitude drift, [0, 1)
  double drift_period_s = 20;           // typical time scale of the drift
};

// Contact loss: signal and noise fall to depth_db (sensor self-noise stays), per site.
struct DropoutNoise {
  bool enabled = false;
  double rate_per_min = 0.3;
  Range duration_ms{50, 500};
  double depth_db = -40;
};

struct ResampleCache;  // noise/recording.cpp

// A user-supplied recording, decoded and checked at parse time (mono mix of its channels).
struct RecordingAudio {
  std::string path;
  int sample_rate_hz = 0;
  std::vector<float> samples;
  std::shared_ptr<ResampleCache> cache;  // resampled copies per record rate
};

struct RecordingNoise {
  std::string file;                     // as written in the recipe
  std::string key_path;                 // for messages, e.g. noise.clinic.recording[0]
  double level_db = 0;
  bool loop = true;                     // false: plays once, silence after
  bool random_offset = true;
  std::shared_ptr<const RecordingAudio> audio;
};

// Stream ids leave room for this many recordings per profile (noise/processes.hpp).
inline constexpr std::size_t kMaxRecordings = 16;

struct NoiseProfile {
  std::string name;
  SensorNoise sensor_white;
  AmbientNoise ambient;
  BreathNoise breath;
  FrictionNoise friction;
  MotionNoise motion;
  HumNoise hum;
  DropoutNoise dropout;
  std::vector<RecordingNoise> recordings;
};

// Parses the table found at key_path (e.g. "noise.clinic_quiet") of the recipe `file`; noise
// files are resolved relative to the recipe's folder and decoded now, so a bad file is refused
// before anything is written. Throws InputError "file:line:column: key = value: allowed".
NoiseProfile parse_noise_profile(const toml::table& table, const std::string& key_path,
                                 const std::string& file);

// Checks what depends on the record's sample rate (bands, hum harmonics, breath limits below
// the Nyquist frequency). Throws InputError naming key_path.
void validate_for_rate(const NoiseProfile& profile, int sample_rate_hz, const std::string& key_path);

std::string_view name(NoiseColor color);

}  // namespace stethogen::noise
