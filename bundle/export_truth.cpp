#include "bundle/export_truth.hpp"

#include <cmath>

#include <fmt/format.h>

#include "core/error.hpp"

namespace stethogen::bundle {

std::string csv_field(std::string_view text) {
  if (text.find_first_of(",\"\r\n") == std::string_view::npos) return std::string(text);
  std::string out = "\"";
  for (char c : text) {
    if (c == '"') out += '"';
    out += c;
  }
  out += '"';
  return out;
}

std::string csv_number(double value) {
  if (std::isnan(value)) return "nan";
  if (std::isinf(value)) return value > 0 ? "inf" : "-inf";
  return fmt::format("{}", value);  // shortest round-trip representation
}

std::vector<StateRun> run_length_encode(const std::uint8_t* labels, std::size_t n) {
  std::vector<StateRun> runs;
  for (std::size_t k = 0; k < n; ++k) {
    if (runs.empty() || runs.back().label != labels[k])
      runs.push_back({static_cast<std::int64_t>(k), static_cast<std::int64_t>(k) + 1, labels[k]});
    else
      runs.back().end_sample = static_cast<std::int64_t>(k) + 1;
  }
  return runs;
}

namespace {

std::string site_name(const std::vector<Site>& sites, std::int32_t site, std::string_view whole, const std::string& record) {
  if (site == -1) return std::string(whole);
  if (site < 0 || static_cast<std::size_t>(site) >= sites.size())
    throw InputError(fmt::format("record {}: site index {}: must be -1 or below the {} sites", record, site, sites.size()));
  return std::string(name(sites[static_cast<std::size_t>(site)]));
}

std::string label_name(std::uint8_t value, const std::string& record) {
  if (value > static_cast<std::uint8_t>(Label::diastole))
    throw InputError(fmt::format("record {}: state label {}: must be 0-4 (unlabelled, S1, systole, S2, diastole)",
                                 record, value));
  return std::string(name(static_cast<Label>(value)));
}

}  // namespace

std::vector<std::string> TruthCsvWriter::file_names() {
  return {"events.csv", "states.csv", "beats.csv", "artifacts.csv"};
}

TruthCsvWriter::TruthCsvWriter(const std::filesystem::path& dir)
    : events_(dir / "events.csv"), states_(dir / "states.csv"), beats_(dir / "beats.csv"),
      artifacts_(dir / "artifacts.csv") {
  events_.stream() << "record_id,beat,kind,site,onset_s,peak_s,offset_s,onset_sample,peak_sample,offset_sample\n";
  states_.stream() << "record_id,site,start_s,end_s,state\n";
  beats_.stream() << "record_id,beat,activation_s,rr_s,resp_phase,inspiration,lv_stroke_volume_ml,"
                     "rv_stroke_volume_ml,lv_ejection_fraction,rv_ejection_fraction,lv_dpdt_max_mmhg_s,"
                     "aortic_systolic_mmhg,aortic_diastolic_mmhg,a2p2_split_ms,s1_amplitude,s2_amplitude\n";
  artifacts_.stream() << "record_id,kind,site,onset_s,offset_s,level_db\n";
}

void TruthCsvWriter::add(const RecordTruth& t) {
  const std::string id = csv_field(t.record_id);
  if (t.events)
    for (const Event& e : *t.events)
      events_.stream() << fmt::format("{},{},{},{},{},{},{},{},{},{}\n", id, e.beat, name(e.kind),
                                      csv_field(site_name(t.sites, e.site, "heart", t.record_id)),
                                      csv_number(e.onset_s), csv_number(e.peak_s), csv_number(e.offset_s),
                                      e.onset_index, e.peak_index, e.offset_index);
  if (t.states) {
    if (t.sample_rate_hz <= 0)
      throw InputError(fmt::format("record {}: sample_rate_hz = {}: must be > 0", t.record_id, t.sample_rate_hz));
    const double rate = t.sample_rate_hz;
    for (std::size_t s = 0; s < t.states->n_sites; ++s) {
      const std::string site = site_name(t.sites, static_cast<std::int32_t>(s), "", t.record_id);
      for (const StateRun& run : run_length_encode(t.states->row(s), t.states->n_samples))
        states_.stream() << fmt::format("{},{},{},{},{}\n", id, site, csv_number(run.start_sample / rate),
                                        csv_number(run.end_sample / rate), label_name(run.label, t.record_id));
    }
  }
  if (t.beats)
    for (const BeatRow& b : *t.beats)
      beats_.stream() << fmt::format("{},{},{},{},{},{},{},{},{},{},{},{},{},{},{},{}\n", id, b.beat,
                                     csv_number(b.activation_s), csv_number(b.rr_s), csv_number(b.resp_phase),
                                     b.inspiration, csv_number(b.lv_stroke_volume_ml),
                                     csv_number(b.rv_stroke_volume_ml), csv_number(b.lv_ejection_fraction),
                                     csv_number(b.rv_ejection_fraction), csv_number(b.lv_dpdt_max_mmhg_s),
                                     csv_number(b.aortic_systolic_mmhg), csv_number(b.aortic_diastolic_mmhg),
                                     csv_number(b.a2p2_split_ms), csv_number(b.s1_amplitude),
                                     csv_number(b.s2_amplitude));
  if (t.artifacts)
    for (const Artifact& a : *t.artifacts)
      artifacts_.stream() << fmt::format("{},{},{},{},{},{}\n", id, csv_field(a.kind),
                                         csv_field(site_name(t.sites, a.site, "all", t.record_id)),
                                         csv_number(a.onset_s), csv_number(a.offset_s), csv_number(a.level_db));
}

void TruthCsvWriter::finish() {
  events_.finish();
  states_.finish();
  beats_.finish();
  artifacts_.finish();
}

void TruthCsvWriter::commit() {
  events_.commit();
  states_.commit();
  beats_.commit();
  artifacts_.commit();
}

}  // namespace stethogen::bundle
