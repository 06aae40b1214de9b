// The groups a score is broken down by: the record's population, state, exercise intensity or
// failure severity, SNR band and heart-rate band, and the site of the detections.
#pragma once

#include <array>
#include <compare>
#include <string>
#include <string_view>
#include <vector>

#include "scoring/truth.hpp"

namespace stethogen::scoring {

inline constexpr std::array<std::string_view, 8> kDimensions = {"all", "population", "state", "grade",
                                                                "snr", "heart_rate", "site", "state_snr"};
enum Dimension : int { kAll, kPopulation, kState, kGrade, kSnr, kHeartRate, kSite, kStateSnr };

// One group; ordered by dimension, then by rank (band order), then by name.
struct GroupKey {
  int dimension = kAll;
  int rank = 0;
  std::string value;
  auto operator<=>(const GroupKey&) const = default;
  std::string_view dimension_name() const { return kDimensions[static_cast<std::size_t>(dimension)]; }
};

// "<0 dB", "0-10 dB", "10-20 dB", ">=20 dB"; "none" for a record without noise (NaN).
GroupKey snr_group(double snr_db);
// "<60 bpm", "60-100 bpm", "100-140 bpm", ">=140 bpm".
GroupKey heart_rate_group(double heart_rate_bpm);
// Exercise: "intensity 0.00-0.25" ... "intensity 0.75-1.00"; failure states the same with
// "severity"; "n/a" otherwise.
GroupKey grade_group(const RecordInfo& info);
// The site of a detection channel; "heart" for heart-level times.
GroupKey site_group(const std::string& site);

// State and SNR band together ("rest, 10-20 dB"): how hard each part of a dataset is.
GroupKey state_snr_group(const RecordInfo& info);

// All record-level groups of a record: all, population, state, grade, snr, heart_rate, state_snr.
std::vector<GroupKey> record_groups(const RecordInfo& info);

}  // namespace stethogen::scoring
