// Types shared by the bundle reader and writer (docs/bundle-format.md): the /index row, the root
// attributes, which parts of a record to store, skipped records and caller-defined string tables.
// HDF5-free: only bundle/*.cpp of the adapter touch HDF5.
#pragma once

#include <array>
#include <cstdint>
#include <string>
#include <utility>
#include <vector>

#include "core/record.hpp"
#include "core/types.hpp"
#include "core/version.hpp"
#include "recipe/compression.hpp"

namespace stethogen::bundle {

// One row of /index: the record-level summary a user filters on.
struct IndexRow {
  std::string record_id;
  std::uint64_t record_index = 0;   // position in the whole dataset (keys the random streams)
  std::string population;
  std::string state;                // canonical State name
  double exercise_intensity = 0;    // [0, 1]
  double severity = 0;              // [0, 1]
  double heart_rate_bpm = 0;
  double cardiac_output_l_min = 0;
  double lv_ejection_fraction = 0;  // fraction, 0-1
  double rv_ejection_fraction = 0;  // fraction, 0-1
  double snr_db = 0;                // drawn target SNR; NaN = no noise
  double snr_achieved_db = 0;       // measured on the written signal; NaN = no noise
  double duration_s = 0;
  std::int32_t sample_rate_hz = 0;
  std::int64_t n_samples = 0;
  std::int32_t n_sites = 0;
  std::int32_t n_beats = 0;
  std::string sensor;               // canonical Sensor name
  std::string noise_profile;        // "" = none
};

// The /index row of a record.
IndexRow index_row(const Record& record);

// Root attributes. format and format_version are fixed by the writer (core/version.hpp) and
// filled in by the reader.
struct BundleAttributes {
  std::string format = kBundleFormatName;
  std::array<int, 2> format_version = {kBundleFormatMajor, kBundleFormatMinor};
  std::string generator_version = kGeneratorVersion;
  std::string recipe_toml;       // the recipe, verbatim
  std::string recipe_sha256;     // lowercase hex of SHA-256 over recipe_toml
  std::uint64_t seed = 0;
  std::uint64_t record_count = 0;  // records the recipe plans for the whole dataset
  SampleFormat sample_format = SampleFormat::float32;  // storage of pcg and pcg_clean
  std::string content = "full";  // "full"; split writes "public" / "key"
  // dataset.compression the records were written with; bundles written before the key existed
  // were all "compact" (shuffle + deflate 4), which is what a reader assumes when it is absent.
  Compression compression = Compression::fast;
  // Shard files only: 0-based shard index and shard count; -1 / 0 for a whole dataset.
  std::int32_t shard_index = -1;
  std::int32_t shard_count = 0;
  // Wall-clock creation time, ISO 8601 UTC ("2026-01-31T12:00:00Z"). The one attribute that
  // differs between identical runs (verify ignores it). Empty: the writer sets it, honouring
  // SOURCE_DATE_EPOCH when that is set (reproducible-builds convention).
  std::string created_utc;
  // Caller-defined extra string attributes on the root (e.g. split's provenance).
  std::vector<std::pair<std::string, std::string>> extra;
};

// Which parts of a record to store. pcg is always stored; the rest is truth a public
// (blinded) bundle omits.
struct RecordParts {
  bool pcg_clean = true;
  bool states = true;
  bool events = true;
  bool beats = true;
  bool hemodynamics = true;
  bool artifacts = true;

  static RecordParts all() { return {}; }
  static RecordParts pcg_only() { return {false, false, false, false, false, false}; }
};

// A record the run skipped (dataset.on_record_error = "skip"), kept in /skipped.
struct SkippedRecord {
  std::string record_id;
  std::uint64_t record_index = 0;
  std::string reason;
};

// A caller-defined table of string columns (e.g. split's public-to-original id mapping).
// Every column has the same number of rows.
struct StringTable {
  std::vector<std::string> column_names;
  std::vector<std::vector<std::string>> columns;  // columns[c][row]

  std::size_t rows() const { return columns.empty() ? 0 : columns.front().size(); }
};

}  // namespace stethogen::bundle
