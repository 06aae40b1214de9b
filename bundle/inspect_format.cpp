// Text and JSON renderings of the inspect summaries (declared in bundle/inspect.hpp).
#include <algorithm>
#include <cmath>

#include <fmt/format.h>

#include "bundle/inspect.hpp"

namespace stethogen::bundle {
namespace {

constexpr std::size_t kBarWidth = 40;  // characters of the longest histogram bar

std::string human_bytes(std::uint64_t bytes) {
  const char* units[] = {"B", "KiB", "MiB", "GiB", "TiB"};
  double value = static_cast<double>(bytes);
  int u = 0;
  while (value >= 1024 && u < 4) {
    value /= 1024;
    ++u;
  }
  return u == 0 ? fmt::format("{} B", bytes) : fmt::format("{:.1f} {}", value, units[u]);
}

std::string number(double v) { return std::isfinite(v) ? fmt::format("{:.4g}", v) : std::string("-"); }

void groups_text(std::string& out, const std::string& title, const std::vector<GroupCount>& groups, bool with_state) {
  std::size_t width = title.size();
  for (const GroupCount& g : groups) width = std::max(width, g.name.size());
  out += fmt::format("\n{:<{}}  {}{:>8}  {:>9}\n", title, width, with_state ? fmt::format("{:<15}", "state") : "",
                     "records", "hours");
  for (const GroupCount& g : groups)
    out += fmt::format("{:<{}}  {}{:>8}  {:>9.4f}\n", g.name, width, with_state ? fmt::format("{:<15}", g.state) : "",
                       g.records, g.audio_hours);
}

nlohmann::json groups_json(const std::vector<GroupCount>& groups, bool with_state) {
  nlohmann::json out = nlohmann::json::array();
  for (const GroupCount& g : groups) {
    nlohmann::json j = {{"name", g.name}, {"records", g.records}, {"audio_hours", g.audio_hours}};
    if (with_state) j["state"] = g.state;
    out.push_back(j);
  }
  return out;
}

nlohmann::json span_json(const StatSpan& s) {
  if (s.count == 0) return nullptr;
  return {{"count", s.count}, {"mean", s.mean}, {"min", s.min}, {"max", s.max}};
}

std::string span_text(const StatSpan& s) {
  if (s.count == 0) return "-";
  return fmt::format("mean {}  range [{}, {}]", number(s.mean), number(s.min), number(s.max));
}

std::string site_label(const std::vector<Site>& sites, std::int32_t site) {
  if (site < 0 || static_cast<std::size_t>(site) >= sites.size()) return "all";
  return std::string(name(sites[static_cast<std::size_t>(site)]));
}

}  // namespace

std::string format_summary(const DatasetSummary& s) {
  const BundleAttributes& a = s.attributes;
  std::string out;
  out += fmt::format("bundle     {} ({})\n", s.path, human_bytes(s.file_size_bytes));
  out += fmt::format("format     {} {}.{}, generator {}, content {}\n", a.format, a.format_version[0],
                     a.format_version[1], a.generator_version, a.content);
  out += fmt::format("recipe     sha256 {}, seed {}\n", a.recipe_sha256, a.seed);
  if (a.shard_count > 0) out += fmt::format("shard      {} of {}\n", a.shard_index + 1, a.shard_count);
  out += fmt::format("records    {} written of {} planned, {} skipped\n", s.records, a.record_count, s.skipped);
  out += fmt::format("audio      {:.4f} h ({:.4f} site-hours), pcg stored as {}\n", s.audio_hours,
                     s.site_audio_hours, name(a.sample_format));
  if (!a.created_utc.empty()) out += fmt::format("created    {}\n", a.created_utc);
  groups_text(out, "population", s.populations, true);
  groups_text(out, "state", s.states, false);
  groups_text(out, "sample rate", s.sample_rates, false);
  groups_text(out, "sensor", s.sensors, false);
  groups_text(out, "noise profile", s.noise_profiles, false);

  out += fmt::format("\n{:<22}{:>12}{:>12}{:>8}\n", "index column", "min", "max", "finite");
  for (const ColumnRange& r : s.ranges)
    out += fmt::format("{:<22}{:>12}{:>12}{:>8}\n", r.column, r.finite ? number(r.min) : "-",
                       r.finite ? number(r.max) : "-", r.finite);

  out += "\ndrawn SNR (dB)\n";
  const std::uint64_t peak = s.snr.counts.empty() ? 0 : *std::max_element(s.snr.counts.begin(), s.snr.counts.end());
  for (std::size_t b = 0; b < s.snr.counts.size(); ++b) {
    const std::uint64_t n = s.snr.counts[b];
    const std::size_t bar = peak == 0 ? 0 : static_cast<std::size_t>(std::llround(double(n) * kBarWidth / double(peak)));
    out += fmt::format("  [{:>6.1f}, {:>6.1f})  {:<{}} {}\n", s.snr.lo_db[b], s.snr.lo_db[b] + s.snr.bin_width_db,
                       std::string(n > 0 ? std::max<std::size_t>(bar, 1) : 0, '#'), kBarWidth, n);
  }
  if (s.snr.no_noise > 0) out += fmt::format("  {:<16}  {:<{}} {}\n", "no noise", "", kBarWidth, s.snr.no_noise);
  return out;
}

nlohmann::json summary_json(const DatasetSummary& s) {
  const BundleAttributes& a = s.attributes;
  nlohmann::json ranges = nlohmann::json::object();
  for (const ColumnRange& r : s.ranges)
    ranges[r.column] = r.finite ? nlohmann::json{{"min", r.min}, {"max", r.max}, {"finite", r.finite}}
                                : nlohmann::json{{"min", nullptr}, {"max", nullptr}, {"finite", 0}};
  nlohmann::json bins = nlohmann::json::array();
  for (std::size_t b = 0; b < s.snr.counts.size(); ++b)
    bins.push_back({{"lo_db", s.snr.lo_db[b]}, {"hi_db", s.snr.lo_db[b] + s.snr.bin_width_db}, {"count", s.snr.counts[b]}});
  return {
      {"path", s.path},
      {"file_size_bytes", s.file_size_bytes},
      {"format", a.format},
      {"format_version", a.format_version},
      {"generator_version", a.generator_version},
      {"recipe_sha256", a.recipe_sha256},
      {"seed", a.seed},
      {"content", a.content},
      {"sample_format", name(a.sample_format)},
      {"shard", a.shard_count > 0 ? nlohmann::json{{"index", a.shard_index}, {"count", a.shard_count}} : nlohmann::json()},
      {"created_utc", a.created_utc},
      {"records", s.records},
      {"records_planned", a.record_count},
      {"skipped", s.skipped},
      {"audio_hours", s.audio_hours},
      {"site_audio_hours", s.site_audio_hours},
      {"populations", groups_json(s.populations, true)},
      {"states", groups_json(s.states, false)},
      {"sample_rates", groups_json(s.sample_rates, false)},
      {"sensors", groups_json(s.sensors, false)},
      {"noise_profiles", groups_json(s.noise_profiles, false)},
      {"ranges", ranges},
      {"snr_histogram", {{"bin_width_db", s.snr.bin_width_db}, {"bins", bins}, {"no_noise", s.snr.no_noise}}},
  };
}

std::string format_record(const RecordDetail& d) {
  const IndexRow& r = d.row;
  std::string sites;
  for (Site site : d.sites) sites += (sites.empty() ? "" : ", ") + std::string(name(site));
  std::string out;
  out += fmt::format("record        {} (index {})\n", r.record_id, r.record_index);
  out += fmt::format("population    {} (state {})\n", r.population, r.state);
  out += fmt::format("parameters    exercise_intensity {}, severity {}\n", number(r.exercise_intensity), number(r.severity));
  out += fmt::format("physiology    heart rate {} bpm, cardiac output {} L/min, LV EF {}, RV EF {}\n",
                     number(r.heart_rate_bpm), number(r.cardiac_output_l_min), number(r.lv_ejection_fraction),
                     number(r.rv_ejection_fraction));
  out += fmt::format("signal        {} s at {} Hz ({} samples), sites {}, sensor {}\n", number(r.duration_s),
                     r.sample_rate_hz, r.n_samples, sites, r.sensor);
  out += fmt::format("noise         profile {}, SNR target {} dB, achieved {} dB\n",
                     r.noise_profile.empty() ? "(none)" : r.noise_profile, number(r.snr_db), number(r.snr_achieved_db));
  if (d.planned.empty()) {
    out += fmt::format("\ndrawn parameters  {}\n", d.planned_note);
  } else {
    out += "\ndrawn parameters (planned again from the embedded recipe; - = the state's default)\n";
    for (const auto& p : d.planned)
      out += fmt::format("  {:<26} {:>10}{}\n", p.key, number(p.value), p.unit.empty() ? "" : " " + p.unit);
  }
  if (d.parts.beats) {
    out += fmt::format("\nbeats         {} ({} starting in inspiration)\n", d.beats, d.inspiration_beats);
    out += fmt::format("  rr_s                 {}\n", span_text(d.rr_s));
    out += fmt::format("  lv_stroke_volume_ml  {}\n", span_text(d.lv_stroke_volume_ml));
    out += fmt::format("  lv_dpdt_max_mmhg_s   {}\n", span_text(d.lv_dpdt_max_mmhg_s));
    out += fmt::format("  a2p2_split_ms        {}\n", span_text(d.a2p2_split_ms));
    out += fmt::format("  s1_amplitude         {}\n", span_text(d.s1_amplitude));
    out += fmt::format("  s2_amplitude         {}\n", span_text(d.s2_amplitude));
  } else {
    out += "\nbeats         not stored in this bundle\n";
  }
  if (d.parts.events) {
    out += "\nevents per kind (heart-level and per-site rows)\n";
    for (const auto& [kind, n] : d.event_counts) out += fmt::format("  {:<16} {}\n", kind, n);
  } else {
    out += "\nevents        not stored in this bundle\n";
  }
  if (d.parts.artifacts) {
    out += fmt::format("\nartifacts     {}\n", d.artifacts.size());
    for (const Artifact& a : d.artifacts)
      out += fmt::format("  {:<12} site {:<10} {:>9.3f} - {:>9.3f} s  {:>7.1f} dB\n", a.kind, site_label(d.sites, a.site),
                         a.onset_s, a.offset_s, a.level_db);
  } else {
    out += "\nartifacts     not stored in this bundle\n";
  }
  return out;
}

nlohmann::json record_json(const RecordDetail& d) {
  const IndexRow& r = d.row;
  nlohmann::json sites = nlohmann::json::array();
  for (Site site : d.sites) sites.push_back(name(site));
  nlohmann::json out = {
      {"record_id", r.record_id},
      {"record_index", r.record_index},
      {"population", r.population},
      {"state", r.state},
      {"exercise_intensity", r.exercise_intensity},
      {"severity", r.severity},
      {"heart_rate_bpm", r.heart_rate_bpm},
      {"cardiac_output_l_min", r.cardiac_output_l_min},
      {"lv_ejection_fraction", r.lv_ejection_fraction},
      {"rv_ejection_fraction", r.rv_ejection_fraction},
      {"duration_s", r.duration_s},
      {"sample_rate_hz", r.sample_rate_hz},
      {"n_samples", r.n_samples},
      {"sites", sites},
      {"sensor", r.sensor},
      {"noise_profile", r.noise_profile},
      {"snr_target_db", r.snr_db},
      {"snr_achieved_db", r.snr_achieved_db},
  };
  if (!d.planned.empty()) {
    nlohmann::json planned = nlohmann::json::object();
    for (const auto& p : d.planned) planned[p.key] = p.value;
    out["drawn_parameters"] = planned;
  }
  if (d.parts.beats)
    out["beats"] = {{"count", d.beats},
                    {"inspiration", d.inspiration_beats},
                    {"rr_s", span_json(d.rr_s)},
                    {"lv_stroke_volume_ml", span_json(d.lv_stroke_volume_ml)},
                    {"lv_dpdt_max_mmhg_s", span_json(d.lv_dpdt_max_mmhg_s)},
                    {"a2p2_split_ms", span_json(d.a2p2_split_ms)},
                    {"s1_amplitude", span_json(d.s1_amplitude)},
                    {"s2_amplitude", span_json(d.s2_amplitude)}};
  if (d.parts.events) {
    nlohmann::json counts = nlohmann::json::object();
    for (const auto& [kind, n] : d.event_counts) counts[kind] = n;
    out["event_counts"] = counts;
  }
  if (d.parts.artifacts) {
    nlohmann::json artifacts = nlohmann::json::array();
    for (const Artifact& a : d.artifacts)
      artifacts.push_back({{"kind", a.kind}, {"site", site_label(d.sites, a.site)}, {"onset_s", a.onset_s},
                           {"offset_s", a.offset_s}, {"level_db", a.level_db}});
    out["artifacts"] = artifacts;
  }
  return out;
}

}  // namespace stethogen::bundle
