// The truth that scoring compares detections against, behind a small interface so the scorer
// runs on a bundle (BundleTruth) or on records held in memory (MemoryTruth, for tests and for
// scoring right after generation). Records are loaded one at a time: memory stays flat.
#pragma once

#include <cstdint>
#include <filesystem>
#include <memory>
#include <string>
#include <vector>

#include "core/record.hpp"

namespace stethogen::bundle {
class BundleReader;
}

namespace stethogen::scoring {

// What scoring knows about a record before reading its truth (the /index row and the sites).
struct RecordInfo {
  std::string record_id;
  std::string population;
  std::string state;               // canonical State name
  double exercise_intensity = 0;   // [0, 1]
  double severity = 0;             // [0, 1]
  double heart_rate_bpm = 0;
  double snr_db = 0;               // drawn SNR; NaN = no noise
  double duration_s = 0;
  int sample_rate_hz = 0;
  std::vector<std::string> sites;  // canonical Site names, in the record's site order
};

// The truth of one record as scoring uses it.
struct RecordTruth {
  std::vector<Event> events;
  SiteArray<std::uint8_t> states;  // [site][sample] Label values; empty unless asked for
};

class TruthSource {
 public:
  virtual ~TruthSource() = default;
  // Where the truth came from, for messages.
  virtual std::string name() const = 0;
  virtual const std::vector<RecordInfo>& records() const = 0;
  // Truth of records()[index]; states only when with_states (they are the large part).
  virtual RecordTruth load(std::size_t index, bool with_states) const = 0;
};

// Record-level facts of a generated record.
RecordInfo record_info(const Record& record);

// Truth held in memory.
class MemoryTruth final : public TruthSource {
 public:
  explicit MemoryTruth(std::vector<Record> records, std::string name = "memory");
  std::string name() const override { return name_; }
  const std::vector<RecordInfo>& records() const override { return infos_; }
  RecordTruth load(std::size_t index, bool with_states) const override;

 private:
  std::string name_;
  std::vector<Record> records_;
  std::vector<RecordInfo> infos_;
};

// Truth read from a bundle; refuses a bundle without truth (a public bundle of a split).
class BundleTruth final : public TruthSource {
 public:
  explicit BundleTruth(const std::filesystem::path& path);
  ~BundleTruth() override;
  std::string name() const override;
  const std::vector<RecordInfo>& records() const override { return infos_; }
  RecordTruth load(std::size_t index, bool with_states) const override;

 private:
  std::unique_ptr<bundle::BundleReader> reader_;
  std::vector<RecordInfo> infos_;
};

}  // namespace stethogen::scoring
