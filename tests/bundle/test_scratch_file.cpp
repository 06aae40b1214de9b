// The run's scratch files (bundle/scratch_file.hpp): a staged record read back (its metadata from
// the scratch file, its chunks from the data file) writes the same bundle bytes as the staged
// record it was saved from, and any damage to either is detected on load.
#include <catch2/catch.hpp>

#include <algorithm>
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

// Writes the bundle; offsets (if given) gets each record's chunk offsets.
fs::path write_bundle(const fs::path& path, const BundleAttributes& a, const std::vector<StagedRecord>& records,
                      const SkippedRecord& skipped, std::vector<std::vector<std::uint64_t>>* offsets = nullptr) {
  BundleWriter w(path, a);
  for (const StagedRecord& r : records) {
    std::vector<std::uint64_t> at;
    w.write_staged(r, &at);
    if (offsets) offsets->push_back(at);
  }
  w.add_skipped(skipped);
  w.finish();
  return path;
}

std::size_t chunk_count(const StagedRecord& r) {
  std::size_t n = 0;
  for (const StagedObject& o : r.objects) n += o.data.chunks.size();
  return n;
}

}  // namespace

TEST_CASE("a staged record read back from its scratch file writes the same bundle bytes", "[bundle][scratch]") {
  test::TempDir dir;
  for (Compression c : kAllCompressions) {
    BundleAttributes a = test_attributes();
    a.compression = c;
    INFO(name(c));
    const std::vector<StagedRecord> direct = {staged(0, a), staged(1, a)};
    const SkippedRecord skipped{"r000002", 2, "the run-in did not settle"};
    // The data file of generation 7 is the bundle written straight from the staged records.
    std::vector<std::vector<std::uint64_t>> offsets;
    const std::string one =
        test::read_bytes(write_bundle(dir.path() / data_file_name(7), a, direct, skipped, &offsets));
    // Record 0 alone in one scratch file, record 1 and the skipped note together in another.
    std::vector<std::vector<std::vector<unsigned char>>> files(2);
    std::size_t chunk_bytes = 0;
    for (std::size_t k = 0; k < direct.size(); ++k) {
      REQUIRE(offsets[k].size() == chunk_count(direct[k]));
      ScratchEntry e;
      e.record = direct[k];
      e.generation = 7;
      e.chunk_offsets = offsets[k];
      files[k].push_back(scratch_bytes(e));
      for (const StagedObject& o : direct[k].objects)
        for (const auto& c : o.data.chunks) chunk_bytes += c.size();
    }
    files[1].push_back(scratch_bytes(ScratchEntry{std::nullopt, skipped, 0, {}, {}, {}}));
    std::vector<ScratchEntry> back;
    for (std::size_t f = 0; f < files.size(); ++f) {
      const fs::path p = dir.path() / ("rec-" + std::to_string(f) + ".stg");
      save_scratch(p, files[f]);
      REQUIRE_FALSE(fs::exists(p.string() + ".partial"));
      // Only the metadata is in the scratch file: a small fraction of the records' chunk bytes.
      CHECK(fs::file_size(p) < chunk_bytes / 8);
      std::vector<ScratchEntry> entries = load_scratch(p);
      REQUIRE(entries.size() == files[f].size());
      for (ScratchEntry& e : entries) back.push_back(std::move(e));
    }
    REQUIRE(back.size() == 3);
    std::vector<StagedRecord> loaded;
    for (std::size_t k = 0; k < 2; ++k) {
      REQUIRE(back[k].record.has_value());
      REQUIRE_FALSE(back[k].skipped.has_value());
      REQUIRE(back[k].generation == 7);
      REQUIRE(back[k].chunk_offsets == offsets[k]);
      load_chunks(back[k], dir.path(), "rec.stg");
      loaded.push_back(*back[k].record);
    }
    const ScratchEntry& skip = back[2];
    REQUIRE(skip.skipped.has_value());
    REQUIRE_FALSE(skip.record.has_value());
    REQUIRE(skip.skipped->record_id == "r000002");
    REQUIRE(skip.skipped->record_index == 2);
    REQUIRE(skip.skipped->reason == "the run-in did not settle");
    const std::string two = test::read_bytes(write_bundle(dir.path() / "loaded.h5", a, loaded, *skip.skipped));
    REQUIRE(one.size() > 1000);
    REQUIRE(one == two);
    fs::remove(dir.path() / data_file_name(7));
    fs::remove(dir.path() / "loaded.h5");
  }
}

TEST_CASE("a damaged, truncated or extended scratch file or data file is refused on load", "[bundle][scratch]") {
  test::TempDir dir;
  const BundleAttributes a = test_attributes();
  const StagedRecord record = staged(0, a);
  std::vector<std::vector<std::uint64_t>> offsets;
  const fs::path data = write_bundle(dir.path() / data_file_name(1), a, {record}, {"r000009", 9, "x"}, &offsets);
  const std::string data_bytes = test::read_bytes(data);
  const fs::path good = dir.path() / "good.stg";
  ScratchEntry e;
  e.record = record;
  e.generation = 1;
  e.chunk_offsets = offsets.at(0);
  save_scratch(good, {scratch_bytes(e)});
  const auto load = [&](const fs::path& p) {
    std::vector<ScratchEntry> entries = load_scratch(p);
    for (ScratchEntry& entry : entries) load_chunks(entry, dir.path(), p);
    return entries;
  };
  REQUIRE(load(good).size() == 1);
  const std::string bytes = test::read_bytes(good);
  REQUIRE(bytes.size() > 1000);
  const auto refused = [&](const std::string& content, const std::string& data_content) {
    const fs::path p = dir.path() / "bad.stg";
    std::ofstream(p, std::ios::binary | std::ios::trunc) << content;
    std::ofstream(data, std::ios::binary | std::ios::trunc) << data_content;
    try {
      load(p);
    } catch (const RuntimeFailure& err) {
      return std::string(err.what()).find("damaged scratch file") != std::string::npos;
    }
    return false;
  };
  // One bit flipped in the magic, the header, the middle and the last byte of the scratch file.
  for (std::size_t pos : {std::size_t(2), std::size_t(40), bytes.size() / 2, bytes.size() - 1}) {
    std::string flipped = bytes;
    flipped[pos] = static_cast<char>(flipped[pos] ^ 0x10);
    INFO("flipped byte " << pos);
    CHECK(refused(flipped, data_bytes));
  }
  CHECK(refused(bytes.substr(0, bytes.size() - 1), data_bytes));
  CHECK(refused(bytes.substr(0, 30), data_bytes));
  CHECK(refused(bytes + "x", data_bytes));
  CHECK(refused("", data_bytes));
  // One bit flipped in the first, a middle and the last chunk of the record in the data file.
  const std::vector<std::uint64_t>& at = offsets.at(0);
  for (std::size_t k : {std::size_t(0), at.size() / 2, at.size() - 1}) {
    std::string flipped = data_bytes;
    flipped[at[k] + 1] = static_cast<char>(flipped[at[k] + 1] ^ 0x01);
    INFO("chunk " << k);
    CHECK(refused(bytes, flipped));
  }
  // The data file cut short before the last chunk, and missing.
  CHECK(refused(bytes, data_bytes.substr(0, *std::max_element(at.begin(), at.end()) + 2)));
  fs::remove(data);
  {
    const fs::path p = dir.path() / "bad.stg";
    std::ofstream(p, std::ios::binary | std::ios::trunc) << bytes;
    REQUIRE_THROWS_WITH(load(p), Catch::Contains("damaged scratch file") && Catch::Contains("missing"));
  }
  // The same bytes load again once the data file is back.
  std::ofstream(data, std::ios::binary | std::ios::trunc) << data_bytes;
  REQUIRE(load(good).at(0).record.has_value());
}

TEST_CASE("a scratch file that cannot be written is a clear error and leaves nothing", "[bundle][scratch]") {
  test::TempDir dir;
  const fs::path p = dir.path() / "missing-folder" / "rec.stg";
  ScratchEntry e;
  e.skipped = SkippedRecord{"r000000", 0, "reason"};
  REQUIRE_THROWS_WITH(save_scratch(p, {scratch_bytes(e)}),
                      Catch::Contains("cannot create") && Catch::Contains("No such file"));
  REQUIRE_FALSE(fs::exists(p.string() + ".partial"));
}
