// `stethogen score TRUTH DETECTIONS.csv [--tolerance-ms T] [--reference centre|onset|peak]
// [--sweep] [--kinds S1,S2] [--json OUT] [--lenient] [--force]`: scores event detections or a
// segmentation against a bundle's truth (docs/scoring.md).
#include <cstdio>
#include <memory>
#include <string>
#include <vector>

#include <fmt/format.h>

#include "bundle/export_files.hpp"
#include "cli/command.hpp"
#include "core/error.hpp"
#include "scoring/detections.hpp"
#include "scoring/event_score.hpp"
#include "scoring/report.hpp"
#include "scoring/segment_score.hpp"
#include "scoring/truth.hpp"

namespace stethogen::cli {
namespace {

struct ScoreArgs {
  std::string truth;
  std::string detections;
  double tolerance_ms = scoring::kDefaultToleranceS * 1e3;
  std::string reference = "centre";
  std::vector<std::string> kinds;
  std::string json_out;
  bool sweep = false;
  bool lenient = false;
  bool force = false;
};

int run_score(const ScoreArgs& a) {
  if (!a.json_out.empty() && a.json_out != "-") bundle::check_not_overwriting({a.json_out}, a.force);
  scoring::EventScoreOptions options;
  options.tolerance_s = a.tolerance_ms * 1e-3;
  options.reference = *scoring::parse_reference(a.reference);  // CLI11 checked the choice
  for (const std::string& k : a.kinds) {
    std::optional<EventKind> kind = parse_event_kind(k);
    if (!kind || !scoring::is_scorable_kind(*kind))
      throw InputError(fmt::format("--kinds: '{}' is not a sound kind; allowed: {}", k, scoring::scorable_kind_names()));
    options.kinds.push_back(*kind);
  }
  if (a.sweep) {
    options.sweep_s = scoring::kSweepToleranceS;
    if (std::find(options.sweep_s.begin(), options.sweep_s.end(), options.tolerance_s) == options.sweep_s.end())
      options.sweep_s.push_back(options.tolerance_s);
  }

  const scoring::BundleTruth truth(a.truth);
  const scoring::Detections det = scoring::read_detections(a.detections, truth.records(), a.lenient);
  for (const scoring::ProblemSummary& w : det.warnings)
    fmt::print(stderr, "warning: {} row(s) with {}; first: {}\n", w.count, w.problem, w.first_message);

  std::string text;
  nlohmann::json json;
  if (det.format == scoring::DetectionFormat::events) {
    scoring::EventScore score = scoring::score_events(truth, det, options);
    text = scoring::event_report_text(score, det, truth.name());
    json = scoring::event_report_json(score, det, truth.name());
  } else {
    scoring::SegmentScore score = scoring::score_segments(truth, det, options.tolerance_s);
    text = scoring::segment_report_text(score, det, truth.name());
    json = scoring::segment_report_json(score, det, truth.name());
  }
  if (a.json_out == "-") {
    // Record ids and names from the bundle may be invalid UTF-8: replaced, not a serializer error.
    fmt::print("{}\n", json.dump(2, ' ', false, nlohmann::json::error_handler_t::replace));
    return kExitOk;
  }
  fmt::print("{}", text);
  if (!a.json_out.empty()) {
    bundle::StagedTextFile out(a.json_out);
    out.stream() << json.dump(2, ' ', false, nlohmann::json::error_handler_t::replace) << "\n";
    out.close();
  }
  return kExitOk;
}

}  // namespace

Command add_score(CLI::App& root) {
  CLI::App* app = root.add_subcommand(
      "score", "Score a detector's S1/S2/component detections or its segmentation against a bundle's truth");
  auto args = std::make_shared<ScoreArgs>();
  app->add_option("TRUTH", args->truth, "bundle with the truth (a generated bundle, or the key of a split)")
      ->required();
  app->add_option("DETECTIONS", args->detections,
                  "CSV: record_id,kind,time_s[,site] (events) or record_id,site,start_s,end_s,state (segmentation)")
      ->required();
  app->add_option("--tolerance-ms", args->tolerance_ms,
                  "matching window around each true sound; also the boundary window of segmentations")
      ->check(CLI::Range(0.1, 1000.0))
      ->capture_default_str();
  app->add_option("--reference", args->reference, "instant of a true sound compared: centre (midpoint of onset "
                                                  "and offset), onset or peak")
      ->check(CLI::IsMember({"centre", "center", "onset", "peak"}))
      ->capture_default_str();
  app->add_flag("--sweep", args->sweep, "also score at 40, 60, 100 and 150 ms");
  app->add_option("--kinds", args->kinds, "sound kinds to score even if the file has no row of them (e.g. S1,S2)")
      ->delimiter(',');
  app->add_option("--json", args->json_out, "also write the full report as JSON to this file ('-': JSON to "
                                            "standard output instead of the table)");
  app->add_flag("--lenient", args->lenient, "skip bad rows with a warning per problem instead of stopping");
  app->add_flag("--force", args->force, "overwrite an existing --json file");
  return {app, [args] { return run_score(*args); }};
}

}  // namespace stethogen::cli
