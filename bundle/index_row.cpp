#include "bundle/index_row.hpp"

namespace stethogen::bundle {

IndexRow index_row(const Record& record) {
  const SubjectSpec& s = record.subject;
  IndexRow r;
  r.record_id = s.record_id;
  r.record_index = s.record_index;
  r.population = s.population;
  r.state = std::string(name(s.state));
  r.exercise_intensity = s.exercise_intensity;
  r.severity = s.severity;
  r.heart_rate_bpm = record.summary.heart_rate_bpm;
  r.cardiac_output_l_min = record.summary.cardiac_output_l_min;
  r.lv_ejection_fraction = record.summary.lv_ejection_fraction;
  r.rv_ejection_fraction = record.summary.rv_ejection_fraction;
  r.snr_db = record.summary.snr_target_db;
  r.snr_achieved_db = record.summary.snr_achieved_db;
  r.sample_rate_hz = record.sample_rate_hz;
  r.n_samples = static_cast<std::int64_t>(record.pcg.n_samples);
  r.duration_s = record.sample_rate_hz > 0
                     ? static_cast<double>(record.pcg.n_samples) / record.sample_rate_hz
                     : s.params.duration_s;
  r.n_sites = static_cast<std::int32_t>(record.pcg.n_sites);
  r.n_beats = static_cast<std::int32_t>(record.beats.size());
  r.sensor = std::string(name(s.sensor));
  r.noise_profile = s.noise_profile_name;
  return r;
}

}  // namespace stethogen::bundle
