// inspect end to end: the JSON summary and record detail agree with h5py's reading of the
// same bundle; an unknown record is a usage error with a suggestion.
#include <catch2/catch.hpp>

#include <nlohmann/json.hpp>

#include "test_export_support.hpp"

using stethogen::test::ProcessResult;

namespace {

// Reference: h5py reads /index and one record's events by the documented schema.
const char* kCounts = R"PY(
import sys, json, collections
import h5py
with h5py.File(sys.argv[1], "r") as f:
    index = f["index"][()]
    kinds = collections.Counter(k.decode() for k in f["records"][sys.argv[2]]["events"]["kind"])
    print(json.dumps({
        "records": len(index),
        "populations": dict(collections.Counter(p.decode() for p in index["population"])),
        "audio_hours": float(index["duration_s"].sum()) / 3600.0,
        "hr_min": float(index["heart_rate_bpm"].min()), "hr_max": float(index["heart_rate_bpm"].max()),
        "events": dict(kinds),
        "beats": len(f["records"][sys.argv[2]]["beats"]),
    }))
)PY";

}  // namespace

TEST_CASE("inspect --json agrees with h5py's reading of the bundle", "[inspect]") {
  const auto bundle = stethogen::test::shared_tiny_bundle().string();
  stethogen::test::ScratchDir dir("inspect");
  ProcessResult ref = stethogen::test::run_python(dir, "counts.py", kCounts, {bundle, "r000002"});
  INFO(ref.output);
  REQUIRE(ref.exit_code == 0);
  const nlohmann::json want = nlohmann::json::parse(ref.output);

  ProcessResult summary = stethogen::test::run_stethogen({"inspect", bundle, "--json"});
  INFO(summary.output);
  REQUIRE(summary.exit_code == 0);
  const nlohmann::json s = nlohmann::json::parse(summary.output);
  CHECK(s["format"] == "stethogen-bundle");
  CHECK(s["format_version"][0] == 1);
  CHECK(s["records"] == want["records"]);
  CHECK(s["audio_hours"].get<double>() == Approx(want["audio_hours"].get<double>()));
  for (const auto& p : s["populations"]) CHECK(p["records"] == want["populations"][p["name"].get<std::string>()]);
  CHECK(s["populations"].size() == want["populations"].size());
  CHECK(s["ranges"]["heart_rate_bpm"]["min"].get<double>() == want["hr_min"].get<double>());
  CHECK(s["ranges"]["heart_rate_bpm"]["max"].get<double>() == want["hr_max"].get<double>());
  std::uint64_t binned = s["snr_histogram"]["no_noise"].get<std::uint64_t>();
  for (const auto& b : s["snr_histogram"]["bins"]) binned += b["count"].get<std::uint64_t>();
  CHECK(binned == want["records"].get<std::uint64_t>());
  CHECK(s["file_size_bytes"].get<std::uint64_t>() == std::filesystem::file_size(bundle));

  ProcessResult record = stethogen::test::run_stethogen({"inspect", bundle, "--record", "r000002", "--json"});
  INFO(record.output);
  REQUIRE(record.exit_code == 0);
  const nlohmann::json r = nlohmann::json::parse(record.output);
  CHECK(r["population"] == "weak");
  CHECK(r["state"] == "lv_failure");
  CHECK(r["event_counts"] == want["events"]);
  CHECK(r["beats"]["count"] == want["beats"]);
  // The re-planned parameters agree with the recipe (duration 3 s, severity 0.6) and the index.
  CHECK(r["drawn_parameters"]["duration_s"] == 3.0);
  CHECK(r["drawn_parameters"]["severity"] == 0.6);
  CHECK(r["drawn_parameters"]["snr_db"] == r["snr_target_db"]);
}

TEST_CASE("inspect prints a readable summary and refuses unknown records", "[inspect]") {
  const auto bundle = stethogen::test::shared_tiny_bundle().string();
  ProcessResult text = stethogen::test::run_stethogen({"inspect", bundle});
  INFO(text.output);
  CHECK(text.exit_code == 0);
  CHECK(text.output.find("drawn SNR (dB)") != std::string::npos);
  CHECK(text.output.find("calm") != std::string::npos);
  ProcessResult unknown = stethogen::test::run_stethogen({"inspect", bundle, "--record", "r00001"});
  CHECK(unknown.exit_code == 2);
  CHECK(unknown.output.find("did you mean 'r000001'") != std::string::npos);
}
