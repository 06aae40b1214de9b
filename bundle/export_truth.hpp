// The ground truth of a bundle as CSV files (header row, comma separated, RFC 4180 quoting,
// numbers in their shortest exact decimal form, "nan" for a missing value):
//   events.csv    record_id,beat,kind,site,onset_s,peak_s,offset_s,onset_sample,peak_sample,offset_sample
//   states.csv    record_id,site,start_s,end_s,state   (run-length intervals of the label arrays)
//   beats.csv     record_id + the /beats columns
//   artifacts.csv record_id,kind,site,onset_s,offset_s,level_db
// Site is the site name, or "heart" (events) / "all" (artifacts) for site -1.
#pragma once

#include <cstdint>
#include <filesystem>
#include <memory>
#include <string>
#include <string_view>
#include <vector>

#include "bundle/export_files.hpp"
#include "core/record.hpp"
#include "core/types.hpp"

namespace stethogen::bundle {

// A field quoted when it holds a comma, quote or line break.
std::string csv_field(std::string_view text);
// Shortest decimal that reads back to the same double; "nan", "inf", "-inf" otherwise.
std::string csv_number(double value);

// A run of equal labels covering samples [start_sample, end_sample).
struct StateRun {
  std::int64_t start_sample = 0;
  std::int64_t end_sample = 0;
  std::uint8_t label = 0;
};
std::vector<StateRun> run_length_encode(const std::uint8_t* labels, std::size_t n);

// The truth of one record as the CSV writer needs it.
struct RecordTruth {
  std::string record_id;
  int sample_rate_hz = 0;
  std::vector<Site> sites;
  const SiteArray<std::uint8_t>* states = nullptr;
  const std::vector<Event>* events = nullptr;
  const std::vector<BeatRow>* beats = nullptr;
  const std::vector<Artifact>* artifacts = nullptr;
};

// Streams the four per-record truth tables, one record at a time (memory stays flat).
class TruthCsvWriter {
 public:
  static std::vector<std::string> file_names();  // events.csv states.csv beats.csv artifacts.csv
  explicit TruthCsvWriter(const std::filesystem::path& dir);
  void add(const RecordTruth& truth);
  // Flushes and checks every file (throws RuntimeFailure on a write error), then commit()
  // renames them all into place; without commit() nothing appears. close() does both.
  void finish();
  void commit();
  void close() {
    finish();
    commit();
  }

 private:
  StagedTextFile events_, states_, beats_, artifacts_;
};

}  // namespace stethogen::bundle
