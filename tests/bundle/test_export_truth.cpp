// CSV truth files: run-length state intervals and exact number formatting, parsed back by
// Python's csv module (no pandas).
#include <catch2/catch.hpp>

#include <cmath>
#include <limits>

#include "bundle/export_truth.hpp"
#include "test_export_support.hpp"

using namespace stethogen;
using namespace stethogen::bundle;

TEST_CASE("state runs cover every sample exactly once", "[export]") {
  const std::vector<std::uint8_t> labels = {0, 0, 1, 1, 1, 2, 3, 3, 4, 4, 4, 4, 1};
  const std::vector<StateRun> runs = run_length_encode(labels.data(), labels.size());
  REQUIRE(runs.size() == 6);
  std::int64_t next = 0;
  for (const StateRun& r : runs) {
    CHECK(r.start_sample == next);
    CHECK(r.end_sample > r.start_sample);
    for (std::int64_t k = r.start_sample; k < r.end_sample; ++k) CHECK(labels[static_cast<std::size_t>(k)] == r.label);
    next = r.end_sample;
  }
  CHECK(next == static_cast<std::int64_t>(labels.size()));
  CHECK(run_length_encode(labels.data(), 0).empty());
}

TEST_CASE("CSV numbers are the shortest exact decimal and fields are quoted when needed", "[export]") {
  // Round trip through the C library's strtod: the printed decimal reads back to the same double.
  for (double v : {0.1, 1.0 / 3.0, 1e-300, 12345.678901234567, -0.0, 2.5e-7}) CHECK(std::strtod(csv_number(v).c_str(), nullptr) == v);
  CHECK(csv_number(std::numeric_limits<double>::quiet_NaN()) == "nan");
  CHECK(csv_number(-std::numeric_limits<double>::infinity()) == "-inf");
  CHECK(csv_field("plain") == "plain");
  CHECK(csv_field("a,b") == "\"a,b\"");
  CHECK(csv_field("say \"hi\"") == "\"say \"\"hi\"\"\"");
}

TEST_CASE("truth CSV files parse with Python's csv module and agree with the record", "[export]") {
  test::ScratchDir dir("truth");
  const Record record = test::make_test_record(3, 2000, 2.0);
  {
    TruthCsvWriter writer(dir.path());
    // Files appear only on close.
    CHECK_FALSE(std::filesystem::exists(dir / "events.csv"));
    writer.add({record.subject.record_id, record.sample_rate_hz, record.sites, &record.states, &record.events,
                &record.beats, &record.artifacts});
    writer.close();
  }
  // The labels, raw, for the Python side to compare the intervals with.
  std::vector<float> labels(record.states.data.begin(), record.states.data.end());
  test::write_raw_f32(dir / "labels.f32", labels);
  // Reference: Python's csv module and numpy, independent of the C++ writer.
  const char* script = R"PY(
import csv, sys
import numpy as np
d, n_sites, n, rate, n_events, n_beats, n_artifacts = sys.argv[1], *map(int, sys.argv[2:])
names = ["unlabelled", "S1", "systole", "S2", "diastole"]
labels = np.fromfile(d + "/labels.f32", dtype="<f4").reshape(n_sites, n).astype(int)
rows = list(csv.DictReader(open(d + "/states.csv", newline="")))
assert list(rows[0].keys()) == ["record_id", "site", "start_s", "end_s", "state"]
sites = []
for r in rows:
    if r["site"] not in sites: sites.append(r["site"])
assert sites == ["aortic", "mitral"], sites
for s, site in enumerate(sites):
    covered = np.zeros(n, dtype=int)
    for r in (r for r in rows if r["site"] == site):
        a, b = round(float(r["start_s"]) * rate), round(float(r["end_s"]) * rate)
        assert abs(a / rate - float(r["start_s"])) < 1e-12
        covered[a:b] += 1
        assert all(names[v] == r["state"] for v in labels[s, a:b]), (site, a, b)
    assert np.all(covered == 1), "every sample exactly once"
ev = list(csv.DictReader(open(d + "/events.csv", newline="")))
assert list(ev[0].keys()) == "record_id,beat,kind,site,onset_s,peak_s,offset_s,onset_sample,peak_sample,offset_sample".split(",")
assert len(ev) == n_events, len(ev)
for r in ev:
    assert r["site"] in ("heart", "aortic", "mitral")
    for p in ("onset", "peak", "offset"):
        assert int(r[p + "_sample"]) == round(float(r[p + "_s"]) * rate)
assert {r["site"] for r in ev} == {"heart", "aortic"}
beats = list(csv.DictReader(open(d + "/beats.csv", newline="")))
assert len(beats) == n_beats and "a2p2_split_ms" in beats[0]
art = list(csv.DictReader(open(d + "/artifacts.csv", newline="")))
assert len(art) == n_artifacts and {a["site"] for a in art} == {"aortic", "all"}
print("ok")
)PY";
  test::ProcessResult py = test::run_python(
      dir, "check.py", script,
      {dir.path().string(), std::to_string(record.states.n_sites), std::to_string(record.states.n_samples),
       std::to_string(record.sample_rate_hz), std::to_string(record.events.size()), std::to_string(record.beats.size()),
       std::to_string(record.artifacts.size())});
  INFO(py.output);
  CHECK(py.exit_code == 0);
  // No temporary files are left behind.
  for (const auto& entry : std::filesystem::directory_iterator(dir.path()))
    CHECK(entry.path().filename().string().find(".tmp-") == std::string::npos);
}
