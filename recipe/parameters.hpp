// The drawn quantities of a population: their recipe keys, allowed ranges and units. The enum
// value is each quantity's fixed plan sub-stream, so append only, never reorder.
#pragma once

#include <array>
#include <cstdint>
#include <optional>
#include <string>
#include <string_view>
#include <vector>

#include "core/subject.hpp"

namespace stethogen::recipe {

enum class Param : std::uint8_t {
  intensity,  // exercise intensity, exercise only
  severity,   // failure severity, failure states only
  duration_s,
  heart_rate_bpm,
  respiration_rate_per_min,
  respiration_depth_mmhg,
  rsa_fraction,
  lf_fraction,
  blood_volume_ml,
  pr_interval_ms,
  lv_rv_delay_ms,
  chest_wall_mm,
  snr_db,
  sensor_gain_db,
  source_variation,
};
inline constexpr std::size_t kParamCount = 15;

// Plan sub-stream of the noise-profile choice (after every Param).
inline constexpr std::uint32_t kNoiseChoiceSlot = 64;

struct ParamInfo {
  Param param;
  std::string_view key;       // recipe key
  double lo, hi;              // allowed range, inclusive
  std::string_view unit;      // for the plan printout and docs
  std::string_view name_tag;  // prefix in sweep-generated population names
};

// Every Param, in enum order.
const std::array<ParamInfo, kParamCount>& param_table();
const ParamInfo& info(Param p);
std::optional<Param> parse_param(std::string_view key);
// All recipe keys of drawn parameters, for "did you mean".
std::vector<std::string> param_keys();

// The value the plan put into a subject for one drawn parameter; NaN = the state's default
// (heart rate) or no noise (SNR).
double planned_value(const SubjectSpec& s, Param p);

}  // namespace stethogen::recipe
