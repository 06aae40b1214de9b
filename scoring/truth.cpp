#include "scoring/truth.hpp"

#include <fmt/format.h>

#include "bundle/reader.hpp"
#include "core/error.hpp"

namespace stethogen::scoring {

RecordInfo record_info(const Record& record) {
  RecordInfo info;
  info.record_id = record.subject.record_id;
  info.population = record.subject.population;
  info.state = std::string(name(record.subject.state));
  info.exercise_intensity = record.subject.exercise_intensity;
  info.severity = record.subject.severity;
  info.heart_rate_bpm = record.summary.heart_rate_bpm;
  info.snr_db = record.summary.snr_target_db;
  info.sample_rate_hz = record.sample_rate_hz;
  info.duration_s = record.sample_rate_hz > 0
                        ? static_cast<double>(record.pcg.n_samples) / record.sample_rate_hz
                        : 0.0;
  for (Site s : record.sites) info.sites.emplace_back(stethogen::name(s));
  return info;
}

MemoryTruth::MemoryTruth(std::vector<Record> records, std::string name)
    : name_(std::move(name)), records_(std::move(records)) {
  for (const Record& r : records_) infos_.push_back(record_info(r));
}

RecordTruth MemoryTruth::load(std::size_t index, bool with_states) const {
  RecordTruth truth;
  truth.events = records_.at(index).events;
  if (with_states) truth.states = records_.at(index).states;
  return truth;
}

BundleTruth::BundleTruth(const std::filesystem::path& path)
    : reader_(std::make_unique<bundle::BundleReader>(path)) {
  if (reader_->attributes().content == "public")
    throw InputError(fmt::format("{}: a public bundle carries no truth; score against the key bundle "
                                 "written by 'split --key'", path.string()));
  for (const bundle::IndexRow& row : reader_->index()) {
    RecordInfo info;
    info.record_id = row.record_id;
    info.population = row.population;
    info.state = row.state;
    info.exercise_intensity = row.exercise_intensity;
    info.severity = row.severity;
    info.heart_rate_bpm = row.heart_rate_bpm;
    info.snr_db = row.snr_db;
    info.duration_s = row.sample_rate_hz > 0 ? static_cast<double>(row.n_samples) / row.sample_rate_hz
                                             : row.duration_s;
    info.sample_rate_hz = row.sample_rate_hz;
    for (Site s : reader_->sites(row.record_id)) info.sites.emplace_back(stethogen::name(s));
    infos_.push_back(std::move(info));
  }
}

BundleTruth::~BundleTruth() = default;

std::string BundleTruth::name() const { return reader_->path().string(); }

RecordTruth BundleTruth::load(std::size_t index, bool with_states) const {
  const std::string& id = infos_.at(index).record_id;
  bundle::RecordParts parts = reader_->parts(id);
  if (!parts.events)
    throw InputError(fmt::format("{}: record {} has no /events table: nothing to score against",
                                 name(), id));
  RecordTruth truth;
  truth.events = reader_->read_events(id);
  if (with_states) {
    if (!parts.states)
      throw InputError(fmt::format("{}: record {} has no /states: cannot score a segmentation", name(), id));
    truth.states = reader_->read_states(id);
  }
  return truth;
}

}  // namespace stethogen::scoring
