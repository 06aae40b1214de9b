#include <catch2/catch.hpp>

#include <algorithm>
#include <filesystem>
#include <fstream>

#include <fmt/format.h>
#include <nlohmann/json.hpp>

#include "bundle/writer.hpp"
#include "fixtures.hpp"
#include "python_reference.hpp"
#include "scoring/event_score.hpp"
#include "scoring/split.hpp"

using namespace stethogen;
using nlohmann::json;

namespace {

// A two-record bundle written by the bundle adapter, the records kept for building detections.
std::vector<Record> write_fixture_bundle(const std::string& path) {
  test::FixtureSpec a;
  a.snr_db = 30;
  test::FixtureSpec b;
  b.record_id = "r000001";
  b.state = State::exercise;
  b.exercise_intensity = 0.5;
  b.snr_db = 10;
  std::vector<Record> records = {test::fixture_record(a), test::fixture_record(b)};
  bundle::BundleAttributes attributes;
  attributes.recipe_toml = "# hand-built test records\n";
  attributes.seed = 1;
  attributes.record_count = 2;
  bundle::BundleWriter writer(path, attributes);
  for (const Record& r : records) writer.write_record(r);
  writer.finish();
  return records;
}

// Heart-level S1/S2 centres of the records, under the ids given.
void write_truth_detections(const std::string& path, const std::vector<Record>& records,
                            const std::vector<std::string>& ids) {
  std::ofstream out(path);
  out << "record_id,kind,time_s\n";
  for (std::size_t i = 0; i < records.size(); ++i)
    for (EventKind kind : {EventKind::S1, EventKind::S2})
      for (const Event& e : records[i].events)
        if (e.kind == kind && e.site == -1)
          out << fmt::format("{},{},{}\n", ids[i], name(kind), scoring::reference_time(e, scoring::Reference::centre));
}

double overall_f1(const json& report, const std::string& kind) {
  for (const json& g : report["groups"])
    if (g["dimension"] == "all") return g["kinds"][kind]["f1"].get<double>();
  throw std::runtime_error("no overall group");
}

}  // namespace

TEST_CASE("score reads a bundle's truth and reports text and JSON", "[cli]") {
  test::TempDir dir;
  std::vector<Record> records = write_fixture_bundle(dir.file("truth.h5"));
  write_truth_detections(dir.file("det.csv"), records, {"r000000", "r000001"});
  auto r = test::run_stethogen(fmt::format("score {} {} --sweep --json {}", dir.file("truth.h5"), dir.file("det.csv"),
                                           dir.file("score.json")));
  INFO(r.err);
  REQUIRE(r.exit_code == 0);
  REQUIRE_THAT(r.out, Catch::Contains("by snr") && Catch::Contains("tolerance sweep"));
  json report = json::parse(std::ifstream(dir.file("score.json")));
  REQUIRE(overall_f1(report, "S1") == 1.0);
  REQUIRE(overall_f1(report, "S2") == 1.0);
  REQUIRE(report["sweep"].size() == 4);
  // An existing JSON report is kept unless --force.
  auto again = test::run_stethogen(fmt::format("score {} {} --json {}", dir.file("truth.h5"), dir.file("det.csv"),
                                               dir.file("score.json")));
  REQUIRE(again.exit_code == 2);
  REQUIRE_THAT(again.err, Catch::Contains("--force"));
}

TEST_CASE("score reads a segmentation and scores the true states as perfect", "[cli]") {
  test::TempDir dir;
  std::vector<Record> records = write_fixture_bundle(dir.file("truth.h5"));
  std::ofstream(dir.file("seg.csv")) << test::states_as_csv(records[0], 0, 0) + test::states_as_csv(records[1], 0, 0, false);
  auto r = test::run_stethogen(fmt::format("score {} {} --json -", dir.file("truth.h5"), dir.file("seg.csv")));
  INFO(r.err);
  REQUIRE(r.exit_code == 0);
  const json report = json::parse(r.out);
  REQUIRE(report["format"] == "segments");
  REQUIRE(report["sites"] == json::array({"aortic"}));
  REQUIRE(report["groups"][0]["accuracy"] == 1.0);
  for (const json& b : report["boundaries"]) REQUIRE(b["unmatched"] == 0);
  auto text = test::run_stethogen(fmt::format("score {} {}", dir.file("truth.h5"), dir.file("seg.csv")));
  REQUIRE_THAT(text.out, Catch::Contains("confusion (rows: true, columns: detected; samples)"));
}

TEST_CASE("score stops at a bad row with exit code 2, or counts it with --lenient", "[cli]") {
  test::TempDir dir;
  write_fixture_bundle(dir.file("truth.h5"));
  std::ofstream(dir.file("bad.csv")) << "record_id,kind,time_s\nr000000,S1,0.36\nr00000l,S1,1.2\n";
  auto r = test::run_stethogen(fmt::format("score {} {}", dir.file("truth.h5"), dir.file("bad.csv")));
  REQUIRE(r.exit_code == 2);
  REQUIRE_THAT(r.err, Catch::Contains(dir.file("bad.csv") + ":3:1: record_id: 'r00000l'"));
  REQUIRE_THAT(r.err, Catch::Contains("did you mean"));
  auto lenient = test::run_stethogen(fmt::format("score {} {} --lenient", dir.file("truth.h5"), dir.file("bad.csv")));
  REQUIRE(lenient.exit_code == 0);
  REQUIRE_THAT(lenient.err, Catch::Contains("warning: 1 row(s) with unknown record id"));
  REQUIRE_THAT(lenient.out, Catch::Contains("records without any detection (scored as all missed): 1: r000001"));
}

TEST_CASE("split blinds the public bundle and its key scores opaque-id detections", "[cli][split]") {
  test::TempDir dir;
  std::vector<Record> records = write_fixture_bundle(dir.file("full.h5"));
  auto r = test::run_stethogen(fmt::format("split {} --public {} --key {} --seed 99", dir.file("full.h5"),
                                           dir.file("public.h5"), dir.file("key.h5")));
  INFO(r.err);
  REQUIRE(r.exit_code == 0);
  // Read back by the documented schema with h5py, independently of the project's reader.
  json seen = test::run_python(R"(
import json, sys, math
import h5py
c = json.load(sys.stdin)
pub, key = h5py.File(c['public'], 'r'), h5py.File(c['key'], 'r')
def text(v): return v.decode() if isinstance(v, bytes) else str(v)
out = {'content': text(pub.attrs['content']), 'recipe': text(pub.attrs['recipe_toml']),
       'public_ids': sorted(pub['records'].keys()),
       'public_parts': sorted(set(k for r in pub['records'].values() for k in r.keys())),
       'states': sorted(set([text(row['state']) for row in pub['index'][:]] +
                            [text(r.attrs['state']) for r in pub['records'].values()])),
       'index': [{'population': text(row['population']), 'snr': None if math.isnan(row['snr_db']) else 1,
                  'hr': None if math.isnan(row['heart_rate_bpm']) else 1, 'severity': float(row['severity']),
                  'intensity': float(row['exercise_intensity']), 'noise': text(row['noise_profile'])}
                 for row in pub['index'][:]],
       'key_ids': sorted(key['records'].keys()),
       'map': {text(p): text(o) for p, o in zip(key['key/id_map']['public_id'], key['key/id_map']['record_id'])}}
json.dump(out, sys.stdout)
)", {{"public", dir.file("public.h5")}, {"key", dir.file("key.h5")}});
  REQUIRE(seen["content"] == "public");
  REQUIRE(seen["recipe"] == "");
  REQUIRE(seen["public_parts"] == json::array({"pcg"}));
  REQUIRE(seen["states"] == json::array({"withheld"}));
  for (const json& row : seen["index"]) {
    REQUIRE(row["population"] == "");
    REQUIRE(row["snr"].is_null());
    REQUIRE(row["hr"].is_null());
    REQUIRE(row["severity"] == 0.0);
    REQUIRE(row["intensity"] == 0.0);
    REQUIRE(row["noise"] == "");
  }
  REQUIRE(seen["public_ids"] == seen["key_ids"]);
  std::vector<std::string> opaque;
  for (const Record& rec : records) opaque.push_back(scoring::opaque_id(99, rec.subject.record_id));
  for (std::size_t i = 0; i < records.size(); ++i) {
    REQUIRE(seen["map"][opaque[i]] == records[i].subject.record_id);
    REQUIRE(opaque[i].find(records[i].subject.record_id) == std::string::npos);
  }
  REQUIRE(scoring::opaque_id(100, "r000000") != opaque[0]);

  write_truth_detections(dir.file("det.csv"), records, opaque);
  auto scored = test::run_stethogen(fmt::format("score {} {} --json -", dir.file("key.h5"), dir.file("det.csv")));
  INFO(scored.err);
  REQUIRE(scored.exit_code == 0);
  REQUIRE(overall_f1(json::parse(scored.out), "S1") == 1.0);
  auto against_public = test::run_stethogen(fmt::format("score {} {}", dir.file("public.h5"), dir.file("det.csv")));
  REQUIRE(against_public.exit_code == 2);
  REQUIRE_THAT(against_public.err, Catch::Contains("public bundle carries no truth"));
  // The baseline detector runs on the public bundle under the opaque ids.
  auto detected = test::run_stethogen(fmt::format("detect {} -o {}", dir.file("public.h5"), dir.file("base.csv")));
  REQUIRE(detected.exit_code == 0);
  auto base = test::run_stethogen(fmt::format("score {} {} --json -", dir.file("key.h5"), dir.file("base.csv")));
  REQUIRE(base.exit_code == 0);
  REQUIRE(overall_f1(json::parse(base.out), "S1") > 0.8);
  // Nothing is overwritten without --force.
  auto twice = test::run_stethogen(fmt::format("split {} --public {} --key {} --seed 99", dir.file("full.h5"),
                                               dir.file("public.h5"), dir.file("key2.h5")));
  REQUIRE(twice.exit_code == 2);
  REQUIRE_FALSE(std::filesystem::exists(dir.file("key2.h5")));
  auto detect_again = test::run_stethogen(fmt::format("detect {} -o {}", dir.file("public.h5"), dir.file("base.csv")));
  REQUIRE(detect_again.exit_code == 2);
}

TEST_CASE("the baseline detector's F1 falls as the SNR falls (generated records)", "[cli][baseline]") {
  test::TempDir dir;
  std::ofstream(dir.file("sweep.toml")) << R"([dataset]
name = "snr_sweep"
seed = 7
sample_rate_hz = 2000
duration_s = 8
sites = ["mitral"]
sensor = "electronic"
sample_format = "float32"
output = "sweep.h5"
on_record_error = "stop"

[noise.room]
sensor_white = { level_db = -12 }
ambient = { color = "pink", level_db = -6 }
breath = { level_db = -4 }

[[sweep]]
name = "rest"
count = 3
state = "rest"
heart_rate_bpm = { uniform = [60, 80] }
noise = "room"
grid = { snr_db = [25, 15, 5, -5] }
)";
  auto gen = test::run_stethogen(fmt::format("generate {} -o {}", dir.file("sweep.toml"), dir.file("sweep.h5")));
  INFO(gen.err);
  REQUIRE(gen.exit_code == 0);
  REQUIRE(test::run_stethogen(fmt::format("detect {} -o {}", dir.file("sweep.h5"), dir.file("det.csv"))).exit_code == 0);
  auto scored = test::run_stethogen(fmt::format("score {} {} --json -", dir.file("sweep.h5"), dir.file("det.csv")));
  REQUIRE(scored.exit_code == 0);
  std::map<std::string, double> f1;
  const json report = json::parse(scored.out);
  for (const json& g : report["groups"]) {
    if (g["dimension"] != "snr") continue;
    std::size_t tp = 0, fp = 0, fn = 0;
    for (const auto& [kind, t] : g["kinds"].items()) tp += t["tp"].get<std::size_t>(), fp += t["fp"].get<std::size_t>(), fn += t["fn"].get<std::size_t>();
    f1[g["group"]] = 2.0 * tp / (2.0 * tp + fp + fn);
  }
  INFO(json(f1).dump());
  REQUIRE(f1.size() == 4);
  // Three records per band: allow a small rise between neighbouring bands, none overall.
  REQUIRE(f1.at(">=20 dB") >= f1.at("10-20 dB") - 0.05);
  REQUIRE(f1.at("10-20 dB") > f1.at("0-10 dB"));
  // At 5 and -5 dB an energy detector is near chance (F1 0.3-0.5), so the order of those two
  // bands is seed noise; both must lie clearly below the clean bands.
  REQUIRE(std::max(f1.at("0-10 dB"), f1.at("<0 dB")) < f1.at("10-20 dB") - 0.2);
  REQUIRE(f1.at(">=20 dB") - f1.at("<0 dB") > 0.3);
}
