// `inspect`: what a bundle holds, as a dataset summary or one record in detail, for people
// (aligned text) and machines (JSON). Reads only the index and the small truth tables.
#pragma once

#include <cstdint>
#include <filesystem>
#include <string>
#include <vector>

#include <nlohmann/json.hpp>

#include "bundle/index_row.hpp"
#include "bundle/reader.hpp"

namespace stethogen::bundle {

// Records and audio of one population, state or other group.
struct GroupCount {
  std::string name;
  std::string state;        // populations only: their State
  std::uint64_t records = 0;
  double audio_hours = 0;   // sum of record durations
};

// Minimum and maximum over the finite values of one numeric /index column.
struct ColumnRange {
  std::string column;
  std::size_t finite = 0;   // rows with a finite value
  double min = 0, max = 0;
};

// Equal-width bins [lo_db, hi_db) over the finite drawn SNRs.
struct SnrHistogram {
  double bin_width_db = 0;
  std::vector<double> lo_db;
  std::vector<std::uint64_t> counts;
  std::uint64_t no_noise = 0;  // records without noise (NaN SNR)
};

struct DatasetSummary {
  std::string path;
  std::uint64_t file_size_bytes = 0;
  BundleAttributes attributes;
  std::uint64_t records = 0;
  std::uint64_t skipped = 0;
  double audio_hours = 0;       // sum of record durations
  double site_audio_hours = 0;  // sum of duration x sites (what export writes)
  std::vector<GroupCount> populations, states, sample_rates, sensors, noise_profiles;
  std::vector<ColumnRange> ranges;
  SnrHistogram snr;
};

// Pure: from the root attributes and the index (testable without a file).
DatasetSummary summarize_dataset(const BundleAttributes& attributes, const std::vector<IndexRow>& index,
                                 std::uint64_t skipped, std::uint64_t file_size_bytes);
DatasetSummary summarize_dataset(const BundleReader& reader);

// Bins whose width is the smallest of 1, 2, 5, 10, 20, 50 dB giving at most max_bins bins.
SnrHistogram snr_histogram(const std::vector<double>& snr_db, std::size_t max_bins = 12);

struct StatSpan {
  std::size_t count = 0;  // finite values
  double mean = 0, min = 0, max = 0;
};
StatSpan stat_span(const std::vector<double>& values);

struct RecordDetail {
  IndexRow row;
  std::vector<Site> sites;
  RecordParts parts;
  std::size_t beats = 0;
  StatSpan rr_s, lv_stroke_volume_ml, lv_dpdt_max_mmhg_s, a2p2_split_ms, s1_amplitude, s2_amplitude;
  std::size_t inspiration_beats = 0;
  // Events per kind (heart-level and per-site rows), in the canonical kind order.
  std::vector<std::pair<std::string, std::uint64_t>> event_counts;
  std::vector<Artifact> artifacts;
  // The drawn subject parameters, planned again from the embedded recipe (recipe key, value,
  // unit; NaN = the state's default). Empty with a note when the recipe cannot be rebuilt.
  struct PlannedParam {
    std::string key;
    double value = 0;
    std::string unit;
  };
  std::vector<PlannedParam> planned;
  std::string planned_note;
};

// Throws InputError (exit 2) with a did-you-mean suggestion for an unknown record id.
RecordDetail describe_record(const BundleReader& reader, const std::string& record_id);

std::string format_summary(const DatasetSummary& summary);
std::string format_record(const RecordDetail& detail);
nlohmann::json summary_json(const DatasetSummary& summary);
nlohmann::json record_json(const RecordDetail& detail);

}  // namespace stethogen::bundle
