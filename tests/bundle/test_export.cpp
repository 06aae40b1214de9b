// export end to end on a generated bundle, checked against h5py (the bundle) and soundfile
// (the audio) or Python's csv module (the truth files).
#include <catch2/catch.hpp>

#include <filesystem>
#include <fstream>
#include <sstream>

#include "test_export_support.hpp"

namespace fs = std::filesystem;
using stethogen::test::ProcessResult;

namespace {

bool contains(const std::string& text, const std::string& part) { return text.find(part) != std::string::npos; }

std::string slurp(const fs::path& p) {
  std::ostringstream s;
  s << std::ifstream(p, std::ios::binary).rdbuf();
  return s.str();
}

// Reference: h5py reads the bundle's pcg (or pcg_clean) by the documented schema, soundfile
// decodes each exported file; integer audio must agree within half an LSB of x = q / 2^(bits-1)
// except where the bundle value lies outside full scale (clipped), float audio exactly.
const char* kCompareAudio = R"PY(
import sys, os
import h5py, numpy as np, soundfile as sf
bundle, out, ext, bits, dataset = sys.argv[1:6]
files = 0
with h5py.File(bundle, "r") as f:
    for rid in f["records"]:
        ds = f["records"][rid][dataset]
        x = ds[()].astype(np.float64) * float(ds.attrs["scale"])
        rate = int(ds.attrs["sample_rate_hz"])
        for s, site in enumerate(ds.attrs["sites"]):
            path = os.path.join(out, f"{rid}_{site}.{ext}")
            if not os.path.exists(path):
                continue
            files += 1
            info = sf.info(path)
            assert info.samplerate == rate and info.frames == x.shape[1], (path, info)
            if bits == "float":
                y, _ = sf.read(path, dtype="float32")
                assert np.array_equal(y, x[s].astype(np.float32)), path
            else:
                y, _ = sf.read(path, dtype="float64")
                fs_ = 2.0 ** (int(bits) - 1)
                inside = (x[s] * fs_ <= fs_ - 1) & (x[s] >= -1)
                err = np.max(np.abs(y[inside] - x[s][inside]))
                assert err <= 0.5 / fs_ * (1 + 1e-9), (path, err * fs_)
print(files)
)PY";

// Reference: Python's csv module against h5py's reading of the same bundle.
const char* kCompareCsv = R"PY(
import sys, csv
import h5py, numpy as np
bundle, out = sys.argv[1:3]
names = ["unlabelled", "S1", "systole", "S2", "diastole"]
rows = lambda name: list(csv.DictReader(open(f"{out}/{name}", newline="")))
index, events, states = rows("index.csv"), rows("events.csv"), rows("states.csv")
beats, artifacts = rows("beats.csv"), rows("artifacts.csv")
with h5py.File(bundle, "r") as f:
    h5index = f["index"][()]
    assert [r["record_id"] for r in index] == [x.decode() for x in h5index["record_id"]]
    for r, h in zip(index, h5index):
        assert float(r["snr_db"]) == float(h["snr_db"]) and int(r["n_samples"]) == int(h["n_samples"])
    for rid in f["records"]:
        g = f["records"][rid]
        rate = int(g["pcg"].attrs["sample_rate_hz"])
        sites = list(g["pcg"].attrs["sites"])
        ev = g["events"][()]
        mine = [r for r in events if r["record_id"] == rid]
        assert len(mine) == len(ev), (rid, len(mine), len(ev))
        for r, e in zip(mine, ev):
            assert r["kind"] == e["kind"].decode()
            assert r["site"] == ("heart" if e["site"] == -1 else sites[e["site"]])
            assert float(r["onset_s"]) == float(e["onset_s"]) and int(r["peak_sample"]) == int(e["peak_index"])
        labels = g["states"][()]
        for s, site in enumerate(sites):
            covered = np.zeros(labels.shape[1], dtype=int)
            for r in (r for r in states if r["record_id"] == rid and r["site"] == site):
                a, b = round(float(r["start_s"]) * rate), round(float(r["end_s"]) * rate)
                covered[a:b] += 1
                assert set(labels[s, a:b]) == {names.index(r["state"])}, (rid, site, a, b)
            assert np.all(covered == 1), (rid, site, "every sample exactly once")
        assert len([r for r in beats if r["record_id"] == rid]) == len(g["beats"])
        assert len([r for r in artifacts if r["record_id"] == rid]) == len(g["artifacts"])
print("ok")
)PY";

}  // namespace

TEST_CASE("exported audio matches the bundle within quantisation", "[export]") {
  const fs::path bundle = stethogen::test::shared_tiny_bundle();
  stethogen::test::ScratchDir dir("export-audio");
  struct Case {
    const char* format;
    const char* bits;
    bool clean;
  };
  for (const Case& c : {Case{"wav", "16", false}, Case{"wav", "float", false}, Case{"flac", "24", true}}) {
    const fs::path out = dir / (std::string(c.format) + c.bits);
    std::vector<std::string> args = {"export", bundle.string(), "--format", c.format, "--bits", c.bits, "--out", out.string()};
    if (c.clean) args.push_back("--clean");
    ProcessResult r = stethogen::test::run_stethogen(args);
    INFO(r.output);
    REQUIRE(r.exit_code == 0);
    ProcessResult py = stethogen::test::run_python(dir, "audio.py", kCompareAudio,
                                                   {bundle.string(), out.string(), c.format, c.bits,
                                                    c.clean ? "pcg_clean" : "pcg"});
    INFO(py.output);
    CHECK(py.exit_code == 0);
    CHECK(py.output == "8\n");  // 4 records x 2 sites
  }
}

TEST_CASE("CSV truth agrees with the bundle and states cover every sample once", "[export]") {
  const fs::path bundle = stethogen::test::shared_tiny_bundle();
  stethogen::test::ScratchDir dir("export-csv");
  ProcessResult r = stethogen::test::run_stethogen({"export", bundle.string(), "--format", "csv", "--out", dir.path().string()});
  INFO(r.output);
  REQUIRE(r.exit_code == 0);
  ProcessResult py = stethogen::test::run_python(dir, "csv_check.py", kCompareCsv, {bundle.string(), dir.path().string()});
  INFO(py.output);
  CHECK(py.exit_code == 0);
}

TEST_CASE("export refuses to overwrite without --force and rejects bad choices", "[export]") {
  const fs::path bundle = stethogen::test::shared_tiny_bundle();
  stethogen::test::ScratchDir dir("export-force");
  const fs::path target = dir / "r000001_mitral.wav";
  std::ofstream(target) << "precious";
  ProcessResult refused = stethogen::test::run_stethogen({"export", bundle.string(), "--format", "wav", "--out", dir.path().string()});
  CHECK(refused.exit_code == 2);
  CHECK(contains(refused.output, "--force"));
  CHECK(slurp(target) == "precious");
  // Nothing else was written either.
  CHECK(std::distance(fs::directory_iterator(dir.path()), fs::directory_iterator{}) == 1);

  ProcessResult flac_float = stethogen::test::run_stethogen(
      {"export", bundle.string(), "--format", "flac", "--bits", "float", "--out", (dir / "f").string()});
  CHECK(flac_float.exit_code == 2);
  CHECK(contains(flac_float.output, "FLAC stores integer samples only"));
  ProcessResult unknown = stethogen::test::run_stethogen(
      {"export", bundle.string(), "--format", "wav", "--records", "r000001,r00002", "--out", (dir / "u").string()});
  CHECK(unknown.exit_code == 2);
  CHECK(contains(unknown.output, "did you mean 'r000002'"));

  ProcessResult forced = stethogen::test::run_stethogen(
      {"export", bundle.string(), "--format", "wav", "--records", "r000001", "--out", dir.path().string(), "--force"});
  INFO(forced.output);
  CHECK(forced.exit_code == 0);
  CHECK(slurp(target).substr(0, 4) == "RIFF");
  for (const auto& entry : fs::directory_iterator(dir.path()))
    CHECK_FALSE(contains(entry.path().filename().string(), ".tmp-"));
}

TEST_CASE("the Python example reads a record, its labels and events", "[export]") {
  const fs::path bundle = stethogen::test::shared_tiny_bundle();
  stethogen::test::ScratchDir dir("example");
  const std::string script =
      stethogen::test::env_or("STETHOGEN_SOURCE_DIR", ".") + "/examples/python/read_bundle.py";
  ProcessResult r = stethogen::test::run_command(
      stethogen::test::shell_quote(stethogen::test::env_or("STETHOGEN_PYTHON", "/usr/bin/python3")) + " " +
      stethogen::test::shell_quote(script) + " " + stethogen::test::shell_quote(bundle.string()) + " --record r000003");
  INFO(r.output);
  CHECK(r.exit_code == 0);
  CHECK(contains(r.output, "record r000003 (index 3): population weak, state lv_failure"));
  CHECK(contains(r.output, "2 sites (aortic, mitral), 6000 samples at 2000 Hz"));
  CHECK(contains(r.output, "heart-level S1 onsets"));
  ProcessResult missing = stethogen::test::run_command(
      stethogen::test::shell_quote(stethogen::test::env_or("STETHOGEN_PYTHON", "/usr/bin/python3")) + " " +
      stethogen::test::shell_quote(script) + " " + stethogen::test::shell_quote(bundle.string()) + " --record r9");
  CHECK(missing.exit_code == 1);
}

TEST_CASE("int16-stored bundles verify and export within half an LSB", "[export]") {
  stethogen::test::ScratchDir dir("export-int16");
  std::string recipe = stethogen::test::tiny_recipe();
  const std::string sensor_line = "sensor = \"electronic\"\n";
  recipe.replace(recipe.find(sensor_line), sensor_line.size(), sensor_line + "sample_format = \"int16\"\n");
  ProcessResult gen = stethogen::test::generate_bundle(dir, "int16", recipe);
  INFO(gen.output);
  REQUIRE(gen.exit_code == 0);
  const std::string bundle = (dir / "int16.h5").string();
  ProcessResult verified = stethogen::test::run_stethogen({"verify", bundle, "--sample", "2", "--quiet"});
  INFO(verified.output);
  CHECK(verified.exit_code == 0);
  const fs::path out = dir / "wav";
  REQUIRE(stethogen::test::run_stethogen({"export", bundle, "--format", "wav", "--out", out.string()}).exit_code == 0);
  ProcessResult py = stethogen::test::run_python(dir, "audio.py", kCompareAudio, {bundle, out.string(), "wav", "16", "pcg"});
  INFO(py.output);
  CHECK(py.exit_code == 0);
  CHECK(py.output == "8\n");
}

TEST_CASE("a full disk gives a clear error and no partial export files", "[export]") {
  const fs::path bundle = stethogen::test::shared_tiny_bundle();
  stethogen::test::ScratchDir dir("export-full");
  // ulimit -f caps file size at 16 KiB, like a nearly full disk; SIGXFSZ ignored so writes fail
  // with EFBIG instead of killing the process.
  for (const char* format : {"csv", "wav"}) {
    const fs::path out = dir / format;
    const std::string command = "sh -c " + stethogen::test::shell_quote(
        "trap '' XFSZ; ulimit -f 16; exec " + stethogen::test::shell_quote(stethogen::test::env_or("STETHOGEN_BINARY", "stethogen")) +
        " export " + stethogen::test::shell_quote(bundle.string()) + " --format " + format + " --out " +
        stethogen::test::shell_quote(out.string()));
    ProcessResult r = stethogen::test::run_command(command);
    INFO(format << ": " << r.output);
    CHECK(r.exit_code == 1);
    CHECK(contains(r.output, "error: "));
    std::size_t leftovers = 0;
    for (const auto& entry : fs::directory_iterator(out)) {
      // Audio files completed before the limit are whole; nothing temporary or truncated remains.
      CHECK_FALSE(contains(entry.path().filename().string(), ".tmp-"));
      CHECK(std::string(format) == "wav");
      ++leftovers;
    }
    if (std::string(format) == "csv") CHECK(leftovers == 0);
  }
}
