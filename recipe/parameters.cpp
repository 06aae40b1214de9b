#include "recipe/parameters.hpp"

#include <cmath>

namespace stethogen::recipe {

// Ranges: the bounds of adult physiology the circulation model is meant for, wide enough for
// athletes and decompensated patients, narrow enough to refuse impossible values up front.
// Reasoning per row in docs/recipe.md.
const std::array<ParamInfo, kParamCount>& param_table() {
  static const std::array<ParamInfo, kParamCount> table = {{
      {Param::intensity, "intensity", 0, 1, "", "i"},
      {Param::severity, "severity", 0, 1, "", "sev"},
      {Param::duration_s, "duration_s", 2, 600, "s", "dur"},
      {Param::heart_rate_bpm, "heart_rate_bpm", 30, 220, "bpm", "hr"},
      {Param::respiration_rate_per_min, "respiration_rate_per_min", 4, 40, "/min", "resp"},
      {Param::respiration_depth_mmhg, "respiration_depth_mmhg", 0, 20, "mmHg", "depth"},
      {Param::rsa_fraction, "rsa_fraction", 0, 0.2, "", "rsa"},
      {Param::lf_fraction, "lf_fraction", 0, 0.2, "", "lf"},
      {Param::blood_volume_ml, "blood_volume_ml", 2500, 8000, "mL", "bv"},
      {Param::pr_interval_ms, "pr_interval_ms", 80, 320, "ms", "pr"},
      {Param::lv_rv_delay_ms, "lv_rv_delay_ms", -60, 150, "ms", "lvrv"},
      {Param::chest_wall_mm, "chest_wall_mm", 3, 80, "mm", "wall"},
      {Param::snr_db, "snr_db", -20, 80, "dB", "snr"},
      {Param::sensor_gain_db, "sensor_gain_db", -40, 40, "dB", "gain"},
      {Param::source_variation, "source_variation", 0, 1, "", "var"},
  }};
  return table;
}

const ParamInfo& info(Param p) { return param_table()[static_cast<std::size_t>(p)]; }

std::optional<Param> parse_param(std::string_view key) {
  for (const ParamInfo& i : param_table())
    if (i.key == key) return i.param;
  return std::nullopt;
}

std::vector<std::string> param_keys() {
  std::vector<std::string> keys;
  for (const ParamInfo& i : param_table()) keys.emplace_back(i.key);
  return keys;
}

double planned_value(const SubjectSpec& s, Param p) {
  const SubjectParams& q = s.params;
  const double none = std::nan("");
  switch (p) {
    case Param::intensity: return s.exercise_intensity;
    case Param::severity: return s.severity;
    case Param::duration_s: return q.duration_s;
    case Param::heart_rate_bpm: return q.heart_rate_bpm.value_or(none);
    case Param::respiration_rate_per_min: return q.respiration_rate_per_min;
    case Param::respiration_depth_mmhg: return q.respiration_depth_mmhg;
    case Param::rsa_fraction: return q.rsa_fraction;
    case Param::lf_fraction: return q.lf_fraction;
    case Param::blood_volume_ml: return q.blood_volume_ml;
    case Param::pr_interval_ms: return q.pr_interval_ms;
    case Param::lv_rv_delay_ms: return q.lv_rv_delay_ms;
    case Param::chest_wall_mm: return q.chest_wall_mm;
    case Param::snr_db: return q.snr_db.value_or(none);
    case Param::sensor_gain_db: return q.sensor_gain_db;
    case Param::source_variation: return q.source_variation;
  }
  return none;
}

}  // namespace stethogen::recipe
