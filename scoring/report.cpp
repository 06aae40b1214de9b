#include "scoring/report.hpp"

#include <cmath>

#include <fmt/format.h>

namespace stethogen::scoring {
namespace {

using nlohmann::json;

// NaN (undefined) as JSON null.
json number(double v) { return std::isfinite(v) ? json(v) : json(nullptr); }

std::string cell(double v, const char* spec = "{:.3f}") {
  return std::isfinite(v) ? fmt::format(fmt::runtime(spec), v) : std::string("-");
}

std::string preamble(const Detections& det, const std::string& truth_name, std::size_t records,
                     const std::vector<std::string>& missing) {
  std::string out = fmt::format("truth: {} ({} records)\ndetections: {} ({} rows)\n", truth_name, records,
                                det.file, det.data_rows);
  for (const ProblemSummary& w : det.warnings)
    out += fmt::format("warning: skipped or repaired {} row(s): {}; first: {}\n", w.count, w.problem, w.first_message);
  if (!missing.empty()) {
    out += fmt::format("records without any detection (scored as all missed): {}", missing.size());
    for (std::size_t i = 0; i < missing.size() && i < 20; ++i) out += (i ? ", " : ": ") + missing[i];
    out += missing.size() > 20 ? ", ...\n" : "\n";
  }
  return out;
}

json warnings_json(const Detections& det) {
  json w = json::array();
  for (const ProblemSummary& p : det.warnings)
    w.push_back({{"problem", p.problem}, {"count", p.count}, {"first", p.first_message}});
  return w;
}

json tally_json(const Tally& t, bool timing) {
  json j = {{"tp", t.tp}, {"fp", t.fp}, {"fn", t.fn}, {"sensitivity", number(t.sensitivity())},
            {"ppv", number(t.ppv())}, {"f1", number(t.f1())}};
  if (timing) {
    TimingSummary s = summarize_timing(t.errors_s);
    j["timing_ms"] = {{"n", s.n}, {"mean_abs", number(s.mean_abs_ms)}, {"sd", number(s.sd_ms)},
                      {"median_abs", number(s.median_abs_ms)}, {"p95_abs", number(s.p95_abs_ms)},
                      {"bias", number(s.bias_ms)}};
  }
  return j;
}

}  // namespace

std::string event_report_text(const EventScore& score, const Detections& det, const std::string& truth_name) {
  std::string out = preamble(det, truth_name, score.records, score.missing_records);
  out += fmt::format("tolerance: +-{:g} ms around the {} of each true sound\n", score.tolerance_s * 1e3,
                     name(score.reference));
  if (score.truth_outside_record > 0)
    out += fmt::format("not scored: {} true sound(s) whose {} lies outside the recording\n",
                       score.truth_outside_record, name(score.reference));
  std::size_t width = 10;
  for (const auto& [g, kinds] : score.groups) width = std::max(width, g.value.size());
  int previous = -1;
  for (const auto& [g, kinds] : score.groups) {
    if (g.dimension != previous) {
      out += fmt::format("\nby {}\n{:<{}}  {:<4} {:>7} {:>7} {:>7} {:>6} {:>6} {:>6} {:>8} {:>7} {:>8} {:>7} {:>7}\n",
                         g.dimension_name(), "group", width, "kind", "TP", "FP", "FN", "Se", "+P", "F1",
                         "|e| ms", "SD ms", "med ms", "p95 ms", "bias ms");
      previous = g.dimension;
    }
    for (const auto& [kind, t] : kinds) {
      TimingSummary s = summarize_timing(t.errors_s);
      out += fmt::format("{:<{}}  {:<4} {:>7} {:>7} {:>7} {:>6} {:>6} {:>6} {:>8} {:>7} {:>8} {:>7} {:>7}\n", g.value,
                         width, name(kind), t.tp, t.fp, t.fn, cell(t.sensitivity()), cell(t.ppv()), cell(t.f1()),
                         cell(s.mean_abs_ms, "{:.1f}"), cell(s.sd_ms, "{:.1f}"), cell(s.median_abs_ms, "{:.1f}"),
                         cell(s.p95_abs_ms, "{:.1f}"), cell(s.bias_ms, "{:+.1f}"));
    }
  }
  if (!score.sweep.empty()) {
    out += fmt::format("\ntolerance sweep (all records)\n{:>8}  {:<4} {:>7} {:>7} {:>7} {:>6} {:>6} {:>6}\n",
                       "tol ms", "kind", "TP", "FP", "FN", "Se", "+P", "F1");
    for (const auto& [tol, kinds] : score.sweep)
      for (const auto& [kind, t] : kinds)
        out += fmt::format("{:>8g}  {:<4} {:>7} {:>7} {:>7} {:>6} {:>6} {:>6}\n", tol * 1e3, name(kind), t.tp, t.fp,
                           t.fn, cell(t.sensitivity()), cell(t.ppv()), cell(t.f1()));
  }
  return out;
}

json event_report_json(const EventScore& score, const Detections& det, const std::string& truth_name) {
  json j;
  j["truth"] = truth_name;
  j["detections"] = det.file;
  j["format"] = "events";
  j["tolerance_ms"] = score.tolerance_s * 1e3;
  j["reference"] = std::string(name(score.reference));
  j["records"] = score.records;
  j["missing_records"] = score.missing_records;
  j["warnings"] = warnings_json(det);
  j["truth_outside_record"] = score.truth_outside_record;
  json channels = json::array();
  for (const Channel& c : score.channels)
    channels.push_back({{"kind", std::string(name(c.kind))}, {"site", c.site.empty() ? "heart" : c.site}});
  j["channels"] = channels;
  json groups = json::array();
  for (const auto& [g, kinds] : score.groups) {
    json by_kind = json::object();
    for (const auto& [kind, t] : kinds) by_kind[std::string(name(kind))] = tally_json(t, true);
    groups.push_back({{"dimension", std::string(g.dimension_name())}, {"group", g.value}, {"kinds", by_kind}});
  }
  j["groups"] = groups;
  json sweep = json::array();
  for (const auto& [tol, kinds] : score.sweep) {
    json by_kind = json::object();
    for (const auto& [kind, t] : kinds) by_kind[std::string(name(kind))] = tally_json(t, false);
    sweep.push_back({{"tolerance_ms", tol * 1e3}, {"kinds", by_kind}});
  }
  j["sweep"] = sweep;
  json per_record = json::array();
  for (const RecordChannelResult& r : score.per_record)
    per_record.push_back({{"record_id", r.record_id}, {"kind", std::string(name(r.channel.kind))},
                          {"site", r.channel.site.empty() ? "heart" : r.channel.site}, {"tp", r.tp},
                          {"fp", r.fp}, {"fn", r.fn}});
  j["per_record"] = per_record;
  return j;
}

std::string segment_report_text(const SegmentScore& score, const Detections& det, const std::string& truth_name) {
  static const char* kLabels[5] = {"unlabelled", "S1", "systole", "S2", "diastole"};
  std::string out = preamble(det, truth_name, score.records, score.missing_records);
  out += fmt::format("sites: {}\n", fmt::join(score.sites, ", "));
  std::size_t width = 10;
  for (const auto& [g, c] : score.groups) width = std::max(width, g.value.size());
  int previous = -1;
  for (const auto& [g, c] : score.groups) {
    if (g.dimension != previous) {
      out += fmt::format("\nby {}\n{:<{}}  {:>12} {:>9}\n", g.dimension_name(), "group", width, "samples", "accuracy");
      previous = g.dimension;
    }
    std::uint64_t labelled = 0;
    for (int t = 1; t <= 4; ++t)
      for (int d = 0; d <= 4; ++d) labelled += c[t][d];
    out += fmt::format("{:<{}}  {:>12} {:>9}\n", g.value, width, labelled, cell(accuracy(c), "{:.4f}"));
  }
  auto all_group = score.groups.find(GroupKey{kAll, 0, "all"});
  const Confusion all = all_group == score.groups.end() ? Confusion{} : all_group->second;
  out += fmt::format("\nconfusion (rows: true, columns: detected; samples)\n{:<10}", "");
  for (const char* l : kLabels) out += fmt::format(" {:>12}", l);
  out += "\n";
  for (int t = 0; t < 5; ++t) {
    out += fmt::format("{:<10}", kLabels[t]);
    for (int d = 0; d < 5; ++d) out += fmt::format(" {:>12}", all[t][d]);
    out += "\n";
  }
  out += fmt::format("\nboundary errors (nearest detected boundary of the same transition)\n"
                     "{:<12} {:>7} {:>9} {:>8} {:>8} {:>8} {:>8} {:>9}\n",
                     "transition", "n", "unmatched", "|e| ms", "med ms", "p95 ms", "bias ms",
                     fmt::format("<={:g}ms", score.tolerance_s * 1e3));
  for (std::size_t t = 0; t < 4; ++t) {
    const BoundaryErrors& b = score.boundaries[t];
    TimingSummary s = summarize_timing(b.errors_s);
    std::size_t within = std::count_if(b.errors_s.begin(), b.errors_s.end(),
                                       [&](double e) { return std::abs(e) <= score.tolerance_s; });
    double share = s.n + b.unmatched ? static_cast<double>(within) / (s.n + b.unmatched) : NAN;
    out += fmt::format("{:<12} {:>7} {:>9} {:>8} {:>8} {:>8} {:>8} {:>9}\n", kTransitions[t], s.n + b.unmatched,
                       b.unmatched, cell(s.mean_abs_ms, "{:.1f}"), cell(s.median_abs_ms, "{:.1f}"),
                       cell(s.p95_abs_ms, "{:.1f}"), cell(s.bias_ms, "{:+.1f}"), cell(share));
  }
  return out;
}

json segment_report_json(const SegmentScore& score, const Detections& det, const std::string& truth_name) {
  json j;
  j["truth"] = truth_name;
  j["detections"] = det.file;
  j["format"] = "segments";
  j["records"] = score.records;
  j["sites"] = score.sites;
  j["missing_records"] = score.missing_records;
  j["warnings"] = warnings_json(det);
  j["labels"] = {"unlabelled", "S1", "systole", "S2", "diastole"};
  json groups = json::array();
  for (const auto& [g, c] : score.groups) {
    json matrix = json::array();
    for (const auto& row : c) matrix.push_back(row);
    groups.push_back({{"dimension", std::string(g.dimension_name())}, {"group", g.value},
                      {"accuracy", number(accuracy(c))}, {"confusion", matrix}});
  }
  j["groups"] = groups;
  json boundaries = json::array();
  for (std::size_t t = 0; t < 4; ++t) {
    const BoundaryErrors& b = score.boundaries[t];
    TimingSummary s = summarize_timing(b.errors_s);
    std::size_t within = std::count_if(b.errors_s.begin(), b.errors_s.end(),
                                       [&](double e) { return std::abs(e) <= score.tolerance_s; });
    boundaries.push_back({{"transition", kTransitions[t]}, {"n", s.n + b.unmatched}, {"unmatched", b.unmatched},
                          {"within_tolerance", within}, {"mean_abs_ms", number(s.mean_abs_ms)},
                          {"median_abs_ms", number(s.median_abs_ms)}, {"p95_abs_ms", number(s.p95_abs_ms)},
                          {"bias_ms", number(s.bias_ms)}});
  }
  j["boundaries"] = boundaries;
  j["tolerance_ms"] = score.tolerance_s * 1e3;
  return j;
}

}  // namespace stethogen::scoring
