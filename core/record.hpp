// Record: the output of synthesising one SubjectSpec, the input of the bundle writer.
// Layout mirrors the bundle (docs/bundle-format.md): [site][sample] arrays, event, beat and
// artifact tables. Times in seconds from the first recorded sample (the run-in is excluded).
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "core/subject.hpp"
#include "core/types.hpp"

namespace stethogen {

// A [site][sample] array stored row-major.
template <typename T>
struct SiteArray {
  std::size_t n_sites = 0;
  std::size_t n_samples = 0;
  std::vector<T> data;

  SiteArray() = default;
  SiteArray(std::size_t sites, std::size_t samples, T fill = T{})
      : n_sites(sites), n_samples(samples), data(sites * samples, fill) {}
  T* row(std::size_t site) { return data.data() + site * n_samples; }
  const T* row(std::size_t site) const { return data.data() + site * n_samples; }
  T& at(std::size_t site, std::size_t sample) { return data[site * n_samples + sample]; }
  const T& at(std::size_t site, std::size_t sample) const { return data[site * n_samples + sample]; }
};

// One row of /events. site = -1 for the heart-level time; otherwise an index into Record::sites.
// Valve events are instants (onset = peak = offset).
struct Event {
  std::int32_t beat = 0;
  EventKind kind = EventKind::M1;
  std::int32_t site = -1;
  double onset_s = 0, peak_s = 0, offset_s = 0;
  std::int64_t onset_index = 0, peak_index = 0, offset_index = 0;  // samples at the record rate
};

// One row of /beats.
struct BeatRow {
  std::int32_t beat = 0;
  double activation_s = 0;        // onset of LV electrical activation (Q-wave equivalent)
  double rr_s = 0;
  double resp_phase = 0;          // [0, 1), 0 = start of inspiration
  std::uint8_t inspiration = 0;   // 1 if the beat starts during inspiration
  double lv_stroke_volume_ml = 0;
  double rv_stroke_volume_ml = 0;
  double lv_ejection_fraction = 0;  // fraction, 0-1
  double rv_ejection_fraction = 0;
  double lv_dpdt_max_mmhg_s = 0;
  double aortic_systolic_mmhg = 0;
  double aortic_diastolic_mmhg = 0;
  double a2p2_split_ms = 0;       // P2 onset minus A2 onset; negative = reversed
  double s1_amplitude = 0;        // heart-level peak envelope, same unit for all records
  double s2_amplitude = 0;
};

// One row of /artifacts: a non-stationary noise event.
struct Artifact {
  std::string kind;               // e.g. "friction", "motion", "dropout", "clipping"
  std::int32_t site = -1;         // -1 = all sites
  double onset_s = 0, offset_s = 0;
  double level_db = 0;            // level relative to the clean signal power at that site
};

// Downsampled hemodynamic traces, one row per channel.
struct HemodynamicTraces {
  double sample_rate_hz = 0;
  std::vector<std::string> names;  // e.g. "lv_pressure"
  std::vector<std::string> units;  // e.g. "mmHg", "mL", "mL/s"
  SiteArray<float> data;           // [channel][sample]
};

// Record-level summary, mirrored into /index.
struct RecordSummary {
  double heart_rate_bpm = 0;        // mean over the recorded beats
  double cardiac_output_l_min = 0;
  double lv_ejection_fraction = 0;  // fraction, 0-1
  double rv_ejection_fraction = 0;
  double snr_target_db = 0;         // NaN when no noise was configured
  double snr_achieved_db = 0;       // NaN when no noise was configured
  std::vector<std::string> stationary_noise;  // stationary processes active in this record
  std::uint64_t ode_steps = 0;
  std::uint64_t rhs_evaluations = 0;
};

struct Record {
  SubjectSpec subject;
  int sample_rate_hz = 0;
  std::vector<Site> sites;
  SiteArray<float> pcg;        // noisy signal, sensor full scale = 1
  SiteArray<float> pcg_clean;  // the same without noise
  SiteArray<std::uint8_t> states;  // Label values
  std::vector<Event> events;
  std::vector<BeatRow> beats;
  std::vector<Artifact> artifacts;
  HemodynamicTraces hemodynamics;
  RecordSummary summary;
};

}  // namespace stethogen
