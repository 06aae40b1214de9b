#include <catch2/catch.hpp>

#include <sstream>

#include <fmt/format.h>

#include "fixtures.hpp"
#include "scoring/event_score.hpp"

using namespace stethogen;
using namespace stethogen::scoring;

namespace {

MemoryTruth two_records() {
  test::FixtureSpec a;
  a.record_id = "r000000";
  test::FixtureSpec b;
  b.record_id = "r000001";
  b.state = State::lv_failure;
  b.severity = 0.6;
  b.snr_db = 5;
  b.heart_rate_bpm = 110;
  return MemoryTruth({test::fixture_record(a), test::fixture_record(b)});
}

// The truth's own S1/S2 (heart level, or one site), shifted, every keep-th row kept.
std::string truth_as_csv(const TruthSource& truth, double shift_s = 0, int keep = 1, int site = -1,
                         Reference ref = Reference::centre) {
  std::string csv = site < 0 ? "record_id,kind,time_s\n" : "record_id,kind,time_s,site\n";
  for (std::size_t r = 0; r < truth.records().size(); ++r) {
    const RecordInfo& info = truth.records()[r];
    int count = 0;
    for (EventKind kind : {EventKind::S1, EventKind::S2})
      for (const Event& e : truth.load(r, false).events) {
        if (e.kind != kind || e.site != site || count++ % keep != 0) continue;
        double t = reference_time(e, ref) + shift_s;
        csv += site < 0 ? fmt::format("{},{},{}\n", info.record_id, name(kind), t)
                        : fmt::format("{},{},{},{}\n", info.record_id, name(kind), t, info.sites[site]);
      }
  }
  return csv;
}

EventScore score_csv(const TruthSource& truth, const std::string& csv, EventScoreOptions options = {}) {
  std::istringstream in(csv);
  Detections det = parse_detections(in, "det.csv", truth.records(), false);
  return score_events(truth, det, options);
}

const Tally& overall(const EventScore& s, EventKind kind) { return s.groups.at(GroupKey{kAll, 0, "all"}).at(kind); }

}  // namespace

TEST_CASE("the truth fed back as detections scores F1 = 1 with zero timing error", "[event_score]") {
  MemoryTruth truth = two_records();
  for (Reference ref : {Reference::centre, Reference::onset, Reference::peak}) {
    EventScoreOptions options;
    options.reference = ref;
    EventScore s = score_csv(truth, truth_as_csv(truth, 0, 1, -1, ref), options);
    for (EventKind kind : {EventKind::S1, EventKind::S2}) {
      const Tally& t = overall(s, kind);
      // Definition (ANSI/AAMI EC57 Se and +P): a perfect detector has Se = +P = 1.
      REQUIRE(t.fn == 0);
      REQUIRE(t.fp == 0);
      REQUIRE(t.tp > 10);
      REQUIRE(t.f1() == 1.0);
      TimingSummary timing = summarize_timing(t.errors_s);
      REQUIRE(timing.mean_abs_ms == 0.0);
      REQUIRE(timing.p95_abs_ms == 0.0);
    }
    REQUIRE(s.missing_records.empty());
  }
}

TEST_CASE("the truth shifted beyond the tolerance scores zero", "[event_score]") {
  MemoryTruth truth = two_records();
  EventScoreOptions options;
  options.tolerance_s = 0.06;
  EventScore s = score_csv(truth, truth_as_csv(truth, 0.075), options);
  for (EventKind kind : {EventKind::S1, EventKind::S2}) {
    REQUIRE(overall(s, kind).tp == 0);
    REQUIRE(overall(s, kind).f1() == 0.0);
  }
  // Within the tolerance the same shift is matched and shows up as a +75 ms bias.
  options.tolerance_s = 0.1;
  EventScore wide = score_csv(truth, truth_as_csv(truth, 0.075), options);
  REQUIRE(overall(wide, EventKind::S1).fn == 0);
  REQUIRE(summarize_timing(overall(wide, EventKind::S1).errors_s).bias_ms == Approx(75.0).margin(1e-9));
}

TEST_CASE("dropping half the detections halves sensitivity exactly", "[event_score]") {
  test::FixtureSpec spec;
  spec.duration_s = 10;  // 12 beats at 72 bpm: an even number of S1 and of S2
  MemoryTruth truth({test::fixture_record(spec)});
  EventScore all = score_csv(truth, truth_as_csv(truth));
  EventScore half = score_csv(truth, truth_as_csv(truth, 0, 2));
  std::size_t n = overall(all, EventKind::S1).tp + overall(all, EventKind::S2).tp;
  REQUIRE(n % 2 == 0);
  double se_all = static_cast<double>(n) / n;
  Tally both = overall(half, EventKind::S1);
  both.add(overall(half, EventKind::S2));
  REQUIRE(both.sensitivity() == se_all / 2);
  REQUIRE(both.ppv() == 1.0);
}

TEST_CASE("site rows are matched against that site's truth and broken down by site", "[event_score]") {
  MemoryTruth truth = two_records();
  EventScore s = score_csv(truth, truth_as_csv(truth, 0, 1, 1));
  REQUIRE(s.channels.size() == 2);
  REQUIRE(s.channels[0].site == "mitral");
  const Tally& mitral = s.groups.at(GroupKey{kSite, 1, "mitral"}).at(EventKind::S1);
  REQUIRE(mitral.fn == 0);
  REQUIRE(summarize_timing(mitral.errors_s).mean_abs_ms == 0.0);
  // The same site times against the heart-level truth are 2 ms late, inside the window.
  std::string as_heart = truth_as_csv(truth, 0, 1, 1);
  std::string stripped;
  std::istringstream lines(as_heart);
  for (std::string line; std::getline(lines, line);) stripped += line.substr(0, line.rfind(',')) + "\n";
  EventScore h = score_csv(truth, stripped);
  REQUIRE(summarize_timing(overall(h, EventKind::S1).errors_s).bias_ms == Approx(2.0).margin(1e-6));
}

TEST_CASE("a record without detections counts as all missed and is listed", "[event_score]") {
  MemoryTruth truth = two_records();
  std::string csv = truth_as_csv(truth);
  std::string only_first;
  std::istringstream lines(csv);
  for (std::string line; std::getline(lines, line);)
    if (line.rfind("r000001", 0) != 0) only_first += line + "\n";
  EventScore s = score_csv(truth, only_first);
  REQUIRE(s.missing_records == std::vector<std::string>{"r000001"});
  const Tally& failing = s.groups.at(GroupKey{kState, 0, "lv_failure"}).at(EventKind::S1);
  REQUIRE(failing.tp == 0);
  REQUIRE(failing.fn > 0);
  REQUIRE(s.groups.at(GroupKey{kState, 0, "rest"}).at(EventKind::S1).f1() == 1.0);
  // Breakdown bands of the second record: SNR 5 dB, 110 bpm, severity 0.6.
  REQUIRE(s.groups.count(GroupKey{kSnr, 1, "0-10 dB"}) == 1);
  REQUIRE(s.groups.count(GroupKey{kSnr, 4, "none"}) == 1);
  REQUIRE(s.groups.count(GroupKey{kHeartRate, 2, "100-140 bpm"}) == 1);
  REQUIRE(s.groups.count(GroupKey{kGrade, 12, "severity 0.50-0.75"}) == 1);
  REQUIRE(s.groups.count(GroupKey{kStateSnr, 21, "lv_failure, 0-10 dB"}) == 1);
  REQUIRE(s.groups.count(GroupKey{kStateSnr, 4, "rest, none"}) == 1);
}

TEST_CASE("the sweep scores every tolerance and more tolerance never matches less", "[event_score]") {
  MemoryTruth truth = two_records();
  EventScoreOptions options;
  options.sweep_s = kSweepToleranceS;
  EventScore s = score_csv(truth, truth_as_csv(truth, 0.05), options);
  REQUIRE(s.sweep.size() == 4);
  REQUIRE(s.sweep.at(0.040).at(EventKind::S1).tp == 0);
  REQUIRE(s.sweep.at(0.060).at(EventKind::S1).fn == 0);
  REQUIRE(s.sweep.at(0.150).at(EventKind::S1).fn == 0);
}

TEST_CASE("kinds named but never detected count as missed", "[event_score]") {
  MemoryTruth truth = two_records();
  EventScoreOptions options;
  options.kinds = {EventKind::S1, EventKind::S2};
  std::istringstream in("record_id,kind,time_s\n");
  Detections det = parse_detections(in, "det.csv", truth.records(), false);
  EventScore s = score_events(truth, det, options);
  REQUIRE(overall(s, EventKind::S2).tp == 0);
  REQUIRE(overall(s, EventKind::S2).fn > 0);
  REQUIRE(s.missing_records.size() == 2);
  std::istringstream empty_again("record_id,kind,time_s\n");
  Detections none = parse_detections(empty_again, "det.csv", truth.records(), false);
  REQUIRE_THROWS_WITH(score_events(truth, none, {}), Catch::Contains("--kinds"));
}
