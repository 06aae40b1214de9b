// The run's scratch files (bundle/scratch_file.hpp): a staged record read back writes the same
// bundle bytes as the staged record it was saved from, and any damage is detected on load.
#include <catch2/catch.hpp>

#include <cmath>
#include <fstream>
#include <limits>

#include "bundle/chunk_codec.hpp"
#include "bundle/scratch_file.hpp"
#include "bundle/staged_record.hpp"
#include "bundle/writer.hpp"
#include "core/error.hpp"
#include "record_fixture.hpp"
#include "run_helpers.hpp"
#include "temp_dir.hpp"

using namespace stethogen;
using namespace stethogen::bundle;
namespace fs = std::filesystem;

namespace {

BundleAttributes test_attributes() {
  BundleAttributes a;
  a.recipe_toml = "# scratch test\n";
  a.recipe_sha256 = std::string(64, 'a');
  a.created_utc = "2026-01-01T00:00:00Z";
  return a;
}

StagedRecord staged(std::uint64_t index, const BundleAttributes& a) {
  Record r = test::make_test_record(index);
  r.summary.snr_target_db = std::numeric_limits<double>::quiet_NaN();  // "no noise" must survive as is
  return stage_record(r, encode_record(r, RecordParts::all(), a.sample_format, a.compression), RecordParts::all(),
                      staging_settings(a));
}

fs::path write_bundle(const fs::path& path, const BundleAttributes& a, const std::vector<StagedRecord>& records,
                      const SkippedRecord& skipped) {
  BundleWriter w(path, a);
  for (const StagedRecord& r : records) w.write_staged(r);
  w.add_skipped(skipped);
  w.finish();
  return path;
}

}  // namespace

TEST_CASE("a staged record read back from its scratch file writes the same bundle bytes", "[bundle][scratch]") {
  test::TempDir dir;
  for (Compression c : kAllCompressions) {
    BundleAttributes a = test_attributes();
    a.compression = c;
    INFO(name(c));
    const std::vector<StagedRecord> direct = {staged(0, a), staged(1, a)};
    std::vector<StagedRecord> loaded;
    for (std::size_t k = 0; k < direct.size(); ++k) {
      const fs::path p = dir.path() / ("rec-" + std::to_string(k) + ".stg");
      ScratchEntry e;
      e.record = direct[k];
      save_scratch(p, e);
      REQUIRE_FALSE(fs::exists(p.string() + ".partial"));
      ScratchEntry back = load_scratch(p);
      REQUIRE(back.record.has_value());
      REQUIRE_FALSE(back.skipped.has_value());
      loaded.push_back(*back.record);
    }
    const fs::path skip_path = dir.path() / "skip.stg";
    save_scratch(skip_path, ScratchEntry{std::nullopt, SkippedRecord{"r000002", 2, "the run-in did not settle"}});
    const ScratchEntry skip = load_scratch(skip_path);
    REQUIRE(skip.skipped.has_value());
    REQUIRE(skip.skipped->record_id == "r000002");
    REQUIRE(skip.skipped->record_index == 2);
    REQUIRE(skip.skipped->reason == "the run-in did not settle");
    const std::string one = test::read_bytes(write_bundle(dir.path() / "direct.h5", a, direct, *skip.skipped));
    const std::string two = test::read_bytes(write_bundle(dir.path() / "loaded.h5", a, loaded, *skip.skipped));
    REQUIRE(one.size() > 1000);
    REQUIRE(one == two);
    fs::remove(dir.path() / "direct.h5");
    fs::remove(dir.path() / "loaded.h5");
  }
}

TEST_CASE("a damaged, truncated or extended scratch file is refused on load", "[bundle][scratch]") {
  test::TempDir dir;
  const fs::path good = dir.path() / "good.stg";
  ScratchEntry e;
  e.record = staged(0, test_attributes());
  save_scratch(good, e);
  const std::string bytes = test::read_bytes(good);
  REQUIRE(bytes.size() > 50000);
  const auto refused = [&](const std::string& content) {
    const fs::path p = dir.path() / "bad.stg";
    std::ofstream(p, std::ios::binary | std::ios::trunc) << content;
    try {
      load_scratch(p);
    } catch (const RuntimeFailure& err) {
      return std::string(err.what()).find("damaged scratch file") != std::string::npos;
    }
    return false;
  };
  // One bit flipped in the magic, the header, the first chunk and the last byte.
  for (std::size_t pos : {std::size_t(2), std::size_t(40), bytes.size() / 2, bytes.size() - 1}) {
    std::string flipped = bytes;
    flipped[pos] = static_cast<char>(flipped[pos] ^ 0x10);
    INFO("flipped byte " << pos);
    CHECK(refused(flipped));
  }
  CHECK(refused(bytes.substr(0, bytes.size() - 1)));
  CHECK(refused(bytes.substr(0, 30)));
  CHECK(refused(bytes + "x"));
  CHECK(refused(""));
}

TEST_CASE("a scratch file that cannot be written is a clear error and leaves nothing", "[bundle][scratch]") {
  test::TempDir dir;
  const fs::path p = dir.path() / "missing-folder" / "rec.stg";
  ScratchEntry e;
  e.skipped = SkippedRecord{"r000000", 0, "reason"};
  REQUIRE_THROWS_WITH(save_scratch(p, e), Catch::Contains("cannot create") && Catch::Contains("No such file"));
  REQUIRE_FALSE(fs::exists(p.string() + ".partial"));
}
