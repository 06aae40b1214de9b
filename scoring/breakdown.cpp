#include "scoring/breakdown.hpp"

#include <algorithm>
#include <cmath>

#include <fmt/format.h>

namespace stethogen::scoring {

GroupKey snr_group(double snr_db) {
  if (std::isnan(snr_db)) return {kSnr, 4, "none"};
  if (snr_db < 0) return {kSnr, 0, "<0 dB"};
  if (snr_db < 10) return {kSnr, 1, "0-10 dB"};
  if (snr_db < 20) return {kSnr, 2, "10-20 dB"};
  return {kSnr, 3, ">=20 dB"};
}

GroupKey heart_rate_group(double heart_rate_bpm) {
  if (heart_rate_bpm < 60) return {kHeartRate, 0, "<60 bpm"};
  if (heart_rate_bpm < 100) return {kHeartRate, 1, "60-100 bpm"};
  if (heart_rate_bpm < 140) return {kHeartRate, 2, "100-140 bpm"};
  return {kHeartRate, 3, ">=140 bpm"};
}

GroupKey grade_group(const RecordInfo& info) {
  bool exercise = info.state == "exercise";
  bool failure = info.state.find("failure") != std::string::npos;
  if (!exercise && !failure) return {kGrade, 20, "n/a"};
  double grade = exercise ? info.exercise_intensity : info.severity;
  int bin = std::clamp(static_cast<int>(std::floor(grade * 4)), 0, 3);  // quarters of [0, 1]
  return {kGrade, (exercise ? 0 : 10) + bin,
          fmt::format("{} {:.2f}-{:.2f}", exercise ? "intensity" : "severity", bin * 0.25, (bin + 1) * 0.25)};
}

GroupKey site_group(const std::string& site) { return {kSite, site.empty() ? 0 : 1, site.empty() ? "heart" : site}; }

GroupKey state_snr_group(const RecordInfo& info) {
  int state_rank = static_cast<int>(kAllStates.size());
  for (std::size_t i = 0; i < kAllStates.size(); ++i)
    if (name(kAllStates[i]) == info.state) state_rank = static_cast<int>(i);
  GroupKey snr = snr_group(info.snr_db);
  return {kStateSnr, state_rank * 10 + snr.rank, info.state + ", " + snr.value};
}

std::vector<GroupKey> record_groups(const RecordInfo& info) {
  return {GroupKey{kAll, 0, "all"},  GroupKey{kPopulation, 0, info.population}, GroupKey{kState, 0, info.state},
          grade_group(info),         snr_group(info.snr_db),                     heart_rate_group(info.heart_rate_bpm),
          state_snr_group(info)};
}

}  // namespace stethogen::scoring
