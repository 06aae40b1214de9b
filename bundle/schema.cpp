#include "bundle/schema.hpp"

#include <cmath>
#include <stdexcept>

#include "core/types.hpp"

namespace stethogen::bundle {
namespace {

// Column fillers: one call per column keeps the schema readable as a list.
template <typename Row, typename Get>
void ints(Table& t, const std::string& name, ColumnKind kind, const std::string& unit,
          const std::vector<Row>& rows, Get get) {
  Column& c = t.add(name, kind, unit);
  for (const Row& r : rows) c.ints.push_back(static_cast<std::int64_t>(get(r)));
}
template <typename Row, typename Get>
void reals(Table& t, const std::string& name, const std::string& unit, const std::vector<Row>& rows, Get get) {
  Column& c = t.add(name, ColumnKind::f64, unit);
  for (const Row& r : rows) c.reals.push_back(get(r));
}
template <typename Row, typename Get>
void strings(Table& t, const std::string& name, const std::vector<Row>& rows, Get get) {
  Column& c = t.add(name, ColumnKind::str);
  for (const Row& r : rows) c.strings.emplace_back(get(r));
}

std::int64_t sample_of(double time_s, int rate_hz) {
  return static_cast<std::int64_t>(std::llround(time_s * rate_hz));
}

}  // namespace

Table index_table(const std::vector<IndexRow>& rows) {
  Table t;
  strings(t, "record_id", rows, [](auto& r) { return r.record_id; });
  ints(t, "record_index", ColumnKind::u64, "", rows, [](auto& r) { return r.record_index; });
  strings(t, "population", rows, [](auto& r) { return r.population; });
  strings(t, "state", rows, [](auto& r) { return r.state; });
  reals(t, "exercise_intensity", "1", rows, [](auto& r) { return r.exercise_intensity; });
  reals(t, "severity", "1", rows, [](auto& r) { return r.severity; });
  reals(t, "heart_rate_bpm", "1/min", rows, [](auto& r) { return r.heart_rate_bpm; });
  reals(t, "cardiac_output_l_min", "L/min", rows, [](auto& r) { return r.cardiac_output_l_min; });
  reals(t, "lv_ejection_fraction", "1", rows, [](auto& r) { return r.lv_ejection_fraction; });
  reals(t, "rv_ejection_fraction", "1", rows, [](auto& r) { return r.rv_ejection_fraction; });
  reals(t, "snr_db", "dB", rows, [](auto& r) { return r.snr_db; });
  reals(t, "snr_achieved_db", "dB", rows, [](auto& r) { return r.snr_achieved_db; });
  reals(t, "duration_s", "s", rows, [](auto& r) { return r.duration_s; });
  ints(t, "sample_rate_hz", ColumnKind::i32, "Hz", rows, [](auto& r) { return r.sample_rate_hz; });
  ints(t, "n_samples", ColumnKind::i64, "sample", rows, [](auto& r) { return r.n_samples; });
  ints(t, "n_sites", ColumnKind::i32, "", rows, [](auto& r) { return r.n_sites; });
  ints(t, "n_beats", ColumnKind::i32, "", rows, [](auto& r) { return r.n_beats; });
  strings(t, "sensor", rows, [](auto& r) { return r.sensor; });
  strings(t, "noise_profile", rows, [](auto& r) { return r.noise_profile; });
  return t;
}

std::vector<IndexRow> index_rows(const Table& t) {
  std::vector<IndexRow> rows(t.rows());
  for (std::size_t i = 0; i < rows.size(); ++i) {
    IndexRow& r = rows[i];
    r.record_id = t.string("record_id", i);
    r.record_index = static_cast<std::uint64_t>(t.integer("record_index", i));
    r.population = t.string("population", i);
    r.state = t.string("state", i);
    r.exercise_intensity = t.real("exercise_intensity", i);
    r.severity = t.real("severity", i);
    r.heart_rate_bpm = t.real("heart_rate_bpm", i);
    r.cardiac_output_l_min = t.real("cardiac_output_l_min", i);
    r.lv_ejection_fraction = t.real("lv_ejection_fraction", i);
    r.rv_ejection_fraction = t.real("rv_ejection_fraction", i);
    r.snr_db = t.real("snr_db", i, NAN);
    r.snr_achieved_db = t.real("snr_achieved_db", i, NAN);
    r.duration_s = t.real("duration_s", i);
    r.sample_rate_hz = static_cast<std::int32_t>(t.integer("sample_rate_hz", i));
    r.n_samples = t.integer("n_samples", i);
    r.n_sites = static_cast<std::int32_t>(t.integer("n_sites", i));
    r.n_beats = static_cast<std::int32_t>(t.integer("n_beats", i));
    r.sensor = t.string("sensor", i);
    r.noise_profile = t.string("noise_profile", i);
  }
  return rows;
}

Table events_table(const std::vector<Event>& events) {
  Table t;
  ints(t, "beat", ColumnKind::i32, "", events, [](auto& e) { return e.beat; });
  strings(t, "kind", events, [](auto& e) { return std::string(name(e.kind)); });
  ints(t, "site", ColumnKind::i32, "", events, [](auto& e) { return e.site; });
  reals(t, "onset_s", "s", events, [](auto& e) { return e.onset_s; });
  reals(t, "peak_s", "s", events, [](auto& e) { return e.peak_s; });
  reals(t, "offset_s", "s", events, [](auto& e) { return e.offset_s; });
  ints(t, "onset_index", ColumnKind::i64, "sample", events, [](auto& e) { return e.onset_index; });
  ints(t, "peak_index", ColumnKind::i64, "sample", events, [](auto& e) { return e.peak_index; });
  ints(t, "offset_index", ColumnKind::i64, "sample", events, [](auto& e) { return e.offset_index; });
  return t;
}

std::vector<Event> events_from(const Table& t) {
  std::vector<Event> out(t.rows());
  for (std::size_t i = 0; i < out.size(); ++i) {
    Event& e = out[i];
    e.beat = static_cast<std::int32_t>(t.integer("beat", i));
    std::string kind = t.string("kind", i);
    auto parsed = parse_event_kind(kind);
    if (!parsed) throw std::runtime_error("unknown event kind '" + kind + "'");
    e.kind = *parsed;
    e.site = static_cast<std::int32_t>(t.integer("site", i, -1));
    e.onset_s = t.real("onset_s", i);
    e.peak_s = t.real("peak_s", i);
    e.offset_s = t.real("offset_s", i);
    e.onset_index = t.integer("onset_index", i);
    e.peak_index = t.integer("peak_index", i);
    e.offset_index = t.integer("offset_index", i);
  }
  return out;
}

Table beats_table(const std::vector<BeatRow>& b) {
  Table t;
  ints(t, "beat", ColumnKind::i32, "", b, [](auto& r) { return r.beat; });
  reals(t, "activation_s", "s", b, [](auto& r) { return r.activation_s; });
  reals(t, "rr_s", "s", b, [](auto& r) { return r.rr_s; });
  reals(t, "resp_phase", "1", b, [](auto& r) { return r.resp_phase; });
  ints(t, "inspiration", ColumnKind::u8, "", b, [](auto& r) { return r.inspiration; });
  reals(t, "lv_stroke_volume_ml", "mL", b, [](auto& r) { return r.lv_stroke_volume_ml; });
  reals(t, "rv_stroke_volume_ml", "mL", b, [](auto& r) { return r.rv_stroke_volume_ml; });
  reals(t, "lv_ejection_fraction", "1", b, [](auto& r) { return r.lv_ejection_fraction; });
  reals(t, "rv_ejection_fraction", "1", b, [](auto& r) { return r.rv_ejection_fraction; });
  reals(t, "lv_dpdt_max_mmhg_s", "mmHg/s", b, [](auto& r) { return r.lv_dpdt_max_mmhg_s; });
  reals(t, "aortic_systolic_mmhg", "mmHg", b, [](auto& r) { return r.aortic_systolic_mmhg; });
  reals(t, "aortic_diastolic_mmhg", "mmHg", b, [](auto& r) { return r.aortic_diastolic_mmhg; });
  reals(t, "a2p2_split_ms", "ms", b, [](auto& r) { return r.a2p2_split_ms; });
  reals(t, "s1_amplitude", "full_scale", b, [](auto& r) { return r.s1_amplitude; });
  reals(t, "s2_amplitude", "full_scale", b, [](auto& r) { return r.s2_amplitude; });
  return t;
}

std::vector<BeatRow> beats_from(const Table& t) {
  std::vector<BeatRow> out(t.rows());
  for (std::size_t i = 0; i < out.size(); ++i) {
    BeatRow& b = out[i];
    b.beat = static_cast<std::int32_t>(t.integer("beat", i));
    b.activation_s = t.real("activation_s", i);
    b.rr_s = t.real("rr_s", i);
    b.resp_phase = t.real("resp_phase", i);
    b.inspiration = static_cast<std::uint8_t>(t.integer("inspiration", i));
    b.lv_stroke_volume_ml = t.real("lv_stroke_volume_ml", i);
    b.rv_stroke_volume_ml = t.real("rv_stroke_volume_ml", i);
    b.lv_ejection_fraction = t.real("lv_ejection_fraction", i);
    b.rv_ejection_fraction = t.real("rv_ejection_fraction", i);
    b.lv_dpdt_max_mmhg_s = t.real("lv_dpdt_max_mmhg_s", i);
    b.aortic_systolic_mmhg = t.real("aortic_systolic_mmhg", i);
    b.aortic_diastolic_mmhg = t.real("aortic_diastolic_mmhg", i);
    b.a2p2_split_ms = t.real("a2p2_split_ms", i);
    b.s1_amplitude = t.real("s1_amplitude", i);
    b.s2_amplitude = t.real("s2_amplitude", i);
  }
  return out;
}

Table artifacts_table(const std::vector<Artifact>& a, int rate_hz) {
  Table t;
  strings(t, "kind", a, [](auto& r) { return r.kind; });
  ints(t, "site", ColumnKind::i32, "", a, [](auto& r) { return r.site; });
  reals(t, "onset_s", "s", a, [](auto& r) { return r.onset_s; });
  reals(t, "offset_s", "s", a, [](auto& r) { return r.offset_s; });
  ints(t, "onset_index", ColumnKind::i64, "sample", a, [&](auto& r) { return sample_of(r.onset_s, rate_hz); });
  ints(t, "offset_index", ColumnKind::i64, "sample", a, [&](auto& r) { return sample_of(r.offset_s, rate_hz); });
  reals(t, "level_db", "dB", a, [](auto& r) { return r.level_db; });
  return t;
}

std::vector<Artifact> artifacts_from(const Table& t) {
  std::vector<Artifact> out(t.rows());
  for (std::size_t i = 0; i < out.size(); ++i) {
    out[i].kind = t.string("kind", i);
    out[i].site = static_cast<std::int32_t>(t.integer("site", i, -1));
    out[i].onset_s = t.real("onset_s", i);
    out[i].offset_s = t.real("offset_s", i);
    out[i].level_db = t.real("level_db", i);
  }
  return out;
}

Table skipped_table(const std::vector<SkippedRecord>& s) {
  Table t;
  strings(t, "record_id", s, [](auto& r) { return r.record_id; });
  ints(t, "record_index", ColumnKind::u64, "", s, [](auto& r) { return r.record_index; });
  strings(t, "reason", s, [](auto& r) { return r.reason; });
  return t;
}

std::vector<SkippedRecord> skipped_from(const Table& t) {
  std::vector<SkippedRecord> out(t.rows());
  for (std::size_t i = 0; i < out.size(); ++i) {
    out[i].record_id = t.string("record_id", i);
    out[i].record_index = static_cast<std::uint64_t>(t.integer("record_index", i));
    out[i].reason = t.string("reason", i);
  }
  return out;
}

Table string_table(const StringTable& st) {
  if (st.column_names.size() != st.columns.size())
    throw std::invalid_argument("string table: column names and columns differ in number");
  Table t;
  for (std::size_t c = 0; c < st.columns.size(); ++c) {
    if (st.columns[c].size() != st.rows()) throw std::invalid_argument("string table: ragged columns");
    t.add(st.column_names[c], ColumnKind::str).strings = st.columns[c];
  }
  return t;
}

StringTable string_table_from(const Table& t) {
  StringTable st;
  for (const Column& c : t.columns) {
    st.column_names.push_back(c.name);
    st.columns.push_back(c.strings);
  }
  return st;
}

std::vector<std::string> label_names() {
  return {std::string(name(Label::unlabelled)), std::string(name(Label::s1)),
          std::string(name(Label::systole)), std::string(name(Label::s2)),
          std::string(name(Label::diastole))};
}

}  // namespace stethogen::bundle
