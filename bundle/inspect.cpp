#include "bundle/inspect.hpp"

#include <algorithm>
#include <cmath>
#include <functional>
#include <map>
#include <system_error>

#include <fmt/format.h>

#include "core/error.hpp"
#include "core/suggest.hpp"
#include "recipe/parameters.hpp"
#include "recipe/plan.hpp"
#include "recipe/recipe.hpp"

namespace stethogen::bundle {
namespace {

constexpr double kSecondsPerHour = 3600.0;

// The numeric /index columns whose ranges the summary shows, in file order.
const std::vector<std::pair<std::string, std::function<double(const IndexRow&)>>>& numeric_columns() {
  static const std::vector<std::pair<std::string, std::function<double(const IndexRow&)>>> columns = {
      {"exercise_intensity", [](const IndexRow& r) { return r.exercise_intensity; }},
      {"severity", [](const IndexRow& r) { return r.severity; }},
      {"heart_rate_bpm", [](const IndexRow& r) { return r.heart_rate_bpm; }},
      {"cardiac_output_l_min", [](const IndexRow& r) { return r.cardiac_output_l_min; }},
      {"lv_ejection_fraction", [](const IndexRow& r) { return r.lv_ejection_fraction; }},
      {"rv_ejection_fraction", [](const IndexRow& r) { return r.rv_ejection_fraction; }},
      {"snr_db", [](const IndexRow& r) { return r.snr_db; }},
      {"snr_achieved_db", [](const IndexRow& r) { return r.snr_achieved_db; }},
      {"duration_s", [](const IndexRow& r) { return r.duration_s; }},
      {"sample_rate_hz", [](const IndexRow& r) { return static_cast<double>(r.sample_rate_hz); }},
      {"n_samples", [](const IndexRow& r) { return static_cast<double>(r.n_samples); }},
      {"n_sites", [](const IndexRow& r) { return static_cast<double>(r.n_sites); }},
      {"n_beats", [](const IndexRow& r) { return static_cast<double>(r.n_beats); }},
  };
  return columns;
}

// Groups rows by a key, keeping first-appearance order.
std::vector<GroupCount> count_by(const std::vector<IndexRow>& index,
                                 const std::function<std::string(const IndexRow&)>& key, bool with_state) {
  std::vector<GroupCount> groups;
  std::map<std::string, std::size_t> position;
  for (const IndexRow& row : index) {
    const std::string k = key(row);
    auto [it, inserted] = position.try_emplace(k, groups.size());
    if (inserted) groups.push_back({k, with_state ? row.state : std::string(), 0, 0});
    GroupCount& g = groups[it->second];
    g.records += 1;
    g.audio_hours += row.duration_s / kSecondsPerHour;
  }
  return groups;
}

// Plans the record again from the embedded recipe (noise files relative to the bundle's folder).
void add_planned(const BundleReader& reader, RecordDetail& d) {
  const BundleAttributes& a = reader.attributes();
  if (a.recipe_toml.empty()) {
    d.planned_note = "not available: the bundle carries no recipe";
    return;
  }
  try {
    const std::filesystem::path dir = std::filesystem::absolute(reader.path()).parent_path();
    const recipe::Recipe r =
        recipe::parse_recipe(a.recipe_toml, (dir / (reader.path().filename().string() + "#recipe_toml")).string());
    const SubjectSpec subject = recipe::plan_record(r, d.row.record_index);
    for (const recipe::ParamInfo& p : recipe::param_table())
      d.planned.push_back({std::string(p.key), recipe::planned_value(subject, p.param), std::string(p.unit)});
  } catch (const std::exception& e) {
    d.planned_note = fmt::format("not available: the embedded recipe cannot be rebuilt here ({})", e.what());
  }
}

}  // namespace

StatSpan stat_span(const std::vector<double>& values) {
  StatSpan s;
  double sum = 0;
  for (double v : values) {
    if (!std::isfinite(v)) continue;
    s.min = s.count == 0 ? v : std::min(s.min, v);
    s.max = s.count == 0 ? v : std::max(s.max, v);
    sum += v;
    s.count += 1;
  }
  if (s.count > 0) s.mean = sum / static_cast<double>(s.count);
  return s;
}

SnrHistogram snr_histogram(const std::vector<double>& snr_db, std::size_t max_bins) {
  SnrHistogram h;
  std::vector<double> finite;
  for (double v : snr_db) {
    if (std::isfinite(v))
      finite.push_back(v);
    else
      h.no_noise += 1;
  }
  if (finite.empty()) return h;
  const auto [lo_it, hi_it] = std::minmax_element(finite.begin(), finite.end());
  for (double width : {1.0, 2.0, 5.0, 10.0, 20.0, 50.0}) {
    h.bin_width_db = width;
    double first = std::floor(*lo_it / width) * width;
    auto bins = static_cast<std::size_t>(std::floor((*hi_it - first) / width)) + 1;
    if (bins <= max_bins) break;
  }
  const double first = std::floor(*lo_it / h.bin_width_db) * h.bin_width_db;
  const auto bins = static_cast<std::size_t>(std::floor((*hi_it - first) / h.bin_width_db)) + 1;
  h.counts.assign(bins, 0);
  for (std::size_t b = 0; b < bins; ++b) h.lo_db.push_back(first + static_cast<double>(b) * h.bin_width_db);
  for (double v : finite) {
    auto b = static_cast<std::size_t>(std::floor((v - first) / h.bin_width_db));
    h.counts[std::min(b, bins - 1)] += 1;
  }
  return h;
}

DatasetSummary summarize_dataset(const BundleAttributes& attributes, const std::vector<IndexRow>& index,
                                 std::uint64_t skipped, std::uint64_t file_size_bytes) {
  DatasetSummary s;
  s.attributes = attributes;
  s.file_size_bytes = file_size_bytes;
  s.records = index.size();
  s.skipped = skipped;
  for (const IndexRow& row : index) {
    s.audio_hours += row.duration_s / kSecondsPerHour;
    s.site_audio_hours += row.duration_s * row.n_sites / kSecondsPerHour;
  }
  s.populations = count_by(index, [](const IndexRow& r) { return r.population; }, true);
  s.states = count_by(index, [](const IndexRow& r) { return r.state; }, false);
  s.sample_rates = count_by(index, [](const IndexRow& r) { return fmt::format("{} Hz", r.sample_rate_hz); }, false);
  s.sensors = count_by(index, [](const IndexRow& r) { return r.sensor; }, false);
  s.noise_profiles = count_by(
      index, [](const IndexRow& r) { return r.noise_profile.empty() ? std::string("(none)") : r.noise_profile; }, false);
  for (const auto& [column, value] : numeric_columns()) {
    std::vector<double> values;
    values.reserve(index.size());
    for (const IndexRow& row : index) values.push_back(value(row));
    StatSpan span = stat_span(values);
    s.ranges.push_back({column, span.count, span.min, span.max});
  }
  std::vector<double> snr;
  for (const IndexRow& row : index) snr.push_back(row.snr_db);
  s.snr = snr_histogram(snr);
  return s;
}

DatasetSummary summarize_dataset(const BundleReader& reader) {
  std::error_code ec;
  auto size = std::filesystem::file_size(reader.path(), ec);
  DatasetSummary s = summarize_dataset(reader.attributes(), reader.index(), reader.skipped().size(), ec ? 0 : size);
  s.path = reader.path().string();
  return s;
}

RecordDetail describe_record(const BundleReader& reader, const std::string& record_id) {
  if (!reader.has_record(record_id))
    throw InputError(fmt::format("{}: record '{}' is not in the bundle{}", reader.path().string(), record_id,
                                 did_you_mean(record_id, reader.record_ids())));
  RecordDetail d;
  for (const IndexRow& row : reader.index())
    if (row.record_id == record_id) d.row = row;
  d.sites = reader.sites(record_id);
  d.parts = reader.parts(record_id);
  if (d.parts.beats) {
    std::vector<BeatRow> beats = reader.read_beats(record_id);
    d.beats = beats.size();
    std::vector<double> rr, sv, dpdt, split, s1, s2;
    for (const BeatRow& b : beats) {
      rr.push_back(b.rr_s);
      sv.push_back(b.lv_stroke_volume_ml);
      dpdt.push_back(b.lv_dpdt_max_mmhg_s);
      split.push_back(b.a2p2_split_ms);
      s1.push_back(b.s1_amplitude);
      s2.push_back(b.s2_amplitude);
      d.inspiration_beats += b.inspiration ? 1 : 0;
    }
    d.rr_s = stat_span(rr);
    d.lv_stroke_volume_ml = stat_span(sv);
    d.lv_dpdt_max_mmhg_s = stat_span(dpdt);
    d.a2p2_split_ms = stat_span(split);
    d.s1_amplitude = stat_span(s1);
    d.s2_amplitude = stat_span(s2);
  }
  if (d.parts.events) {
    std::vector<Event> events = reader.read_events(record_id);
    for (EventKind kind : kAllEventKinds) {
      auto n = static_cast<std::uint64_t>(
          std::count_if(events.begin(), events.end(), [&](const Event& e) { return e.kind == kind; }));
      if (n > 0) d.event_counts.emplace_back(std::string(name(kind)), n);
    }
  }
  if (d.parts.artifacts) d.artifacts = reader.read_artifacts(record_id);
  add_planned(reader, d);
  return d;
}

}  // namespace stethogen::bundle
