// verify end to end on generated bundles: passes when intact; names the record and dataset of a
// damaged chunk (bytes flipped where h5py's get_chunk_info says the chunk lies); catches data
// rewritten through h5py (which recomputes the checksums) by regeneration; reports schema
// damage; and says clearly when a noise recording of the recipe is absent.
#include <catch2/catch.hpp>

#include <filesystem>

#include "bundle/export_audio.hpp"
#include "core/random.hpp"
#include "test_export_support.hpp"

using namespace stethogen;
namespace fs = std::filesystem;

namespace {

bool contains(const std::string& text, const std::string& part) { return text.find(part) != std::string::npos; }

// Reference: h5py's low-level get_chunk_info gives a chunk's byte offset in the file; the script
// flips one byte in the middle of chunk 0 of DATASET, outside HDF5.
const char* kFlipChunkByte = R"PY(
import sys, h5py
path, dataset = sys.argv[1], sys.argv[2]
with h5py.File(path, "r") as f:
    info = f[dataset].id.get_chunk_info(0)
    offset, size = info.byte_offset, info.size
with open(path, "r+b") as raw:
    raw.seek(offset + size // 2)
    b = raw.read(1)
    raw.seek(offset + size // 2)
    raw.write(bytes([b[0] ^ 0xFF]))
print(offset, size)
)PY";

// Rewrites one sample through h5py: HDF5 recomputes the Fletcher32 checksum of the chunk.
const char* kTamperSample = R"PY(
import sys, h5py
path, dataset = sys.argv[1], sys.argv[2]
with h5py.File(path, "r+") as f:
    ds = f[dataset]
    ds[0, 100] = ds[0, 100] + 0.25
)PY";

const char* kDropAttribute = R"PY(
import sys, h5py
with h5py.File(sys.argv[1], "r+") as f:
    del f[sys.argv[2]].attrs[sys.argv[3]]
)PY";

// Replaces a record's pcg with a dataset that claims 2^34 samples per site and stores none:
// the shape a damaged file can declare (the bundle fuzzer found one that exhausted memory).
const char* kClaimHugeShape = R"PY(
import sys, h5py
with h5py.File(sys.argv[1], "r+") as f:
    g = f[sys.argv[2]]
    del g["pcg"]
    g.create_dataset("pcg", shape=(4, 2**34), dtype="f4", chunks=(1, 16384))
)PY";

}  // namespace

TEST_CASE("verify passes a fresh bundle and names a corrupted chunk's record and dataset", "[verify]") {
  test::ScratchDir dir("verify");
  test::ProcessResult gen = test::generate_bundle(dir, "tiny", test::tiny_recipe());
  INFO(gen.output);
  REQUIRE(gen.exit_code == 0);
  const std::string bundle = (dir / "tiny.h5").string();

  test::ProcessResult ok = test::run_stethogen({"verify", bundle, "--sample", "4", "--quiet"});
  INFO(ok.output);
  CHECK(ok.exit_code == 0);
  CHECK(contains(ok.output, "4 records compared bit for bit"));
  CHECK(contains(ok.output, "all checks passed"));

  fs::copy_file(bundle, dir / "flipped.h5");
  test::ProcessResult flip = test::run_python(dir, "flip.py", kFlipChunkByte,
                                              {(dir / "flipped.h5").string(), "/records/r000001/pcg_clean"});
  INFO(flip.output);
  REQUIRE(flip.exit_code == 0);
  test::ProcessResult bad = test::run_stethogen({"verify", (dir / "flipped.h5").string(), "--sample", "0"});
  INFO(bad.output);
  CHECK(bad.exit_code == 1);
  CHECK(contains(bad.output, "checksum: record r000001"));
  CHECK(contains(bad.output, "pcg_clean"));
}

TEST_CASE("verify catches data rewritten with valid checksums by regenerating", "[verify]") {
  test::ScratchDir dir("verify-tamper");
  REQUIRE(test::generate_bundle(dir, "tiny", test::tiny_recipe()).exit_code == 0);
  const std::string bundle = (dir / "tiny.h5").string();
  test::ProcessResult tamper = test::run_python(dir, "tamper.py", kTamperSample, {bundle, "/records/r000002/pcg"});
  INFO(tamper.output);
  REQUIRE(tamper.exit_code == 0);
  test::ProcessResult out = test::run_stethogen({"verify", bundle, "--sample", "4", "--quiet"});
  INFO(out.output);
  CHECK(out.exit_code == 1);
  // The checksums are intact (h5py rewrote them); only the regeneration sees the change.
  CHECK(contains(out.output, "records read: ok"));
  CHECK(contains(out.output, "mismatch: record r000002: /records/r000002/pcg: 1 of 12000 values differ"));
  CHECK(contains(out.output, "sample 100"));
}

TEST_CASE("verify reports a missing documented attribute as a schema problem", "[verify]") {
  test::ScratchDir dir("verify-schema");
  REQUIRE(test::generate_bundle(dir, "tiny", test::tiny_recipe()).exit_code == 0);
  const std::string bundle = (dir / "tiny.h5").string();
  REQUIRE(test::run_python(dir, "drop.py", kDropAttribute, {bundle, "/records/r000003/states", "labels"}).exit_code == 0);
  test::ProcessResult out = test::run_stethogen({"verify", bundle, "--sample", "0"});
  INFO(out.output);
  CHECK(out.exit_code == 1);
  CHECK(contains(out.output, "schema: record r000003: /records/r000003/states: attribute 'labels' is missing"));
}

TEST_CASE("verify says clearly when a noise recording of the recipe is absent", "[verify]") {
  test::ScratchDir dir("verify-noise");
  fs::create_directories(dir / "noise");
  // A second of white hiss at 8 kHz as the user-supplied recording.
  RandomStream rng(5, 0, 1);
  std::vector<float> hiss(8000);
  for (float& x : hiss) x = static_cast<float>(0.1 * rng.normal());
  bundle::write_mono_audio(dir / "noise" / "hiss.wav", hiss.data(), hiss.size(), 8000, bundle::AudioContainer::wav,
                           bundle::AudioEncoding::float32);
  const std::string recipe = test::tiny_recipe("recording = { file = \"noise/hiss.wav\", level_db = -6 }\n");
  test::ProcessResult gen = test::generate_bundle(dir, "tiny", recipe);
  INFO(gen.output);
  REQUIRE(gen.exit_code == 0);
  // The bundle moves to another folder; the recording stays behind with the recipe.
  fs::create_directories(dir / "elsewhere");
  fs::rename(dir / "tiny.h5", dir / "elsewhere" / "tiny.h5");
  const std::string moved = (dir / "elsewhere" / "tiny.h5").string();
  test::ProcessResult missing = test::run_stethogen({"verify", moved, "--sample", "1"});
  INFO(missing.output);
  CHECK(missing.exit_code == 2);
  CHECK(contains(missing.output, "incomplete"));
  CHECK(contains(missing.output, "--recipe-dir"));
  CHECK(contains(missing.output, "hiss.wav"));
  test::ProcessResult found = test::run_stethogen({"verify", moved, "--sample", "2", "--recipe-dir", dir.path().string()});
  INFO(found.output);
  CHECK(found.exit_code == 0);
}

TEST_CASE("a signal whose shape the file cannot hold is refused before it is allocated", "[verify]") {
  test::ScratchDir dir("verify-huge-shape");
  REQUIRE(test::generate_bundle(dir, "tiny", test::tiny_recipe()).exit_code == 0);
  const std::string bundle = (dir / "tiny.h5").string();
  REQUIRE(test::run_python(dir, "huge.py", kClaimHugeShape, {bundle, "/records/r000001"}).exit_code == 0);
  test::ProcessResult out = test::run_stethogen({"verify", bundle, "--sample", "0"});
  INFO(out.output);
  CHECK((out.exit_code == 1 || out.exit_code == 2));
  CHECK(contains(out.output, "/records/r000001/pcg: its shape [4, 17179869184] needs 274877906944 bytes"));
  CHECK(contains(out.output, "the bundle is damaged"));
}

TEST_CASE("verify of an unreadable file exits 2", "[verify]") {
  test::ScratchDir dir("verify-unreadable");
  std::ofstream(dir / "not.h5") << "this is not an HDF5 file";
  CHECK(test::run_stethogen({"verify", (dir / "not.h5").string()}).exit_code == 2);
  CHECK(test::run_stethogen({"verify", (dir / "absent.h5").string()}).exit_code == 2);
}

TEST_CASE("verify detects an edited embedded recipe", "[verify]") {
  test::ScratchDir dir("verify-recipe");
  REQUIRE(test::generate_bundle(dir, "tiny", test::tiny_recipe()).exit_code == 0);
  const std::string bundle = (dir / "tiny.h5").string();
  // Rewrites the recipe text through h5py, leaving recipe_sha256 as it was.
  const char* edit = R"PY(
import sys, h5py
with h5py.File(sys.argv[1], "r+") as f:
    f.attrs["recipe_toml"] = f.attrs["recipe_toml"].replace("seed = 11", "seed = 12")
)PY";
  REQUIRE(test::run_python(dir, "edit.py", edit, {bundle}).exit_code == 0);
  test::ProcessResult out = test::run_stethogen({"verify", bundle, "--sample", "1", "--quiet"});
  INFO(out.output);
  CHECK(out.exit_code == 1);
  CHECK(contains(out.output, "recipe_sha256 attribute"));
}

TEST_CASE("verify regenerates a key bundle under its public ids and skips it for a public one", "[verify]") {
  test::ScratchDir dir("verify-split");
  REQUIRE(test::generate_bundle(dir, "tiny", test::tiny_recipe()).exit_code == 0);
  const std::string pub = (dir / "pub.h5").string(), key = (dir / "key.h5").string();
  test::ProcessResult split = test::run_stethogen({"split", (dir / "tiny.h5").string(), "--public", pub, "--key", key});
  INFO(split.output);
  REQUIRE(split.exit_code == 0);
  test::ProcessResult k = test::run_stethogen({"verify", key, "--sample", "2", "--quiet"});
  INFO(k.output);
  CHECK(k.exit_code == 0);
  CHECK(contains(k.output, "2 records compared bit for bit"));
  test::ProcessResult p = test::run_stethogen({"verify", pub, "--quiet"});
  INFO(p.output);
  CHECK(p.exit_code == 0);
  CHECK(contains(p.output, "regeneration does not apply"));
}
