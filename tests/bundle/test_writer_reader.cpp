#include <catch2/catch.hpp>

#include <cmath>
#include <filesystem>
#include <fstream>

#include "bundle/chunk_codec.hpp"
#include "bundle/reader.hpp"
#include "bundle/writer.hpp"
#include "core/error.hpp"
#include "record_fixture.hpp"
#include "temp_dir.hpp"

using namespace stethogen;
using namespace stethogen::bundle;
namespace fs = std::filesystem;

namespace {

BundleAttributes test_attributes(SampleFormat format = SampleFormat::float32) {
  BundleAttributes a;
  a.recipe_toml = "[dataset]\nname = \"harbour\"\n";
  a.recipe_sha256 = std::string(64, 'a');
  a.seed = 7;
  a.record_count = 3;
  a.sample_format = format;
  a.created_utc = "2026-01-01T00:00:00Z";
  return a;
}

void write_bundle(const fs::path& path, SampleFormat format, std::uint64_t n = 3) {
  BundleWriter w(path, test_attributes(format));
  for (std::uint64_t i = 0; i < n; ++i) w.write_record(test::make_test_record(i));
  w.finish();
}

}  // namespace

TEST_CASE("a written record reads back unchanged", "[bundle]") {
  test::TempDir dir;
  const fs::path path = dir.path() / "b.h5";
  write_bundle(path, SampleFormat::float32);
  REQUIRE(fs::exists(path));
  REQUIRE_FALSE(fs::exists(path.string() + ".partial"));

  BundleReader reader(path);
  REQUIRE(reader.attributes().format_version == std::array<int, 2>{1, 1});
  REQUIRE(reader.attributes().recipe_sha256 == std::string(64, 'a'));
  REQUIRE(reader.record_ids() == std::vector<std::string>{"r000000", "r000001", "r000002"});
  const Record expected = test::make_test_record(1);
  const Record got = reader.read_record("r000001");
  REQUIRE(got.pcg.data == expected.pcg.data);
  REQUIRE(got.pcg_clean.data == expected.pcg_clean.data);
  REQUIRE(got.states.data == expected.states.data);
  REQUIRE(got.sites == expected.sites);
  REQUIRE(got.events.size() == expected.events.size());
  REQUIRE(got.events[1].kind == EventKind::aortic_close);
  REQUIRE(got.events[1].site == 1);
  REQUIRE(got.events[2].onset_index == expected.events[2].onset_index);
  REQUIRE(got.events[2].onset_s == expected.events[2].onset_s);
  REQUIRE(got.beats.size() == 3);
  REQUIRE(got.beats[2].a2p2_split_ms == expected.beats[2].a2p2_split_ms);
  REQUIRE(got.artifacts.size() == 1);
  REQUIRE(got.artifacts[0].kind == "friction");
  REQUIRE(got.hemodynamics.names == expected.hemodynamics.names);
  REQUIRE(got.hemodynamics.data.data == expected.hemodynamics.data.data);
  REQUIRE(got.subject.population == "harbour_crew");
  REQUIRE(got.subject.state == State::exercise);
  REQUIRE(reader.index()[1].snr_achieved_db == Approx(11.9));
  reader.check_record_data("r000002");
}

TEST_CASE("integer storage quantises to the documented full scale and clips", "[bundle]") {
  test::TempDir dir;
  for (auto [format, full] : {std::pair{SampleFormat::int16, kInt16FullScale},
                              std::pair{SampleFormat::int24, kInt24FullScale}}) {
    const fs::path path = dir.path() / (std::string(name(format)) + ".h5");
    write_bundle(path, format, 1);
    BundleReader reader(path);
    StoredPcg stored = reader.read_pcg_stored("r000000");
    REQUIRE(stored.format == format);
    REQUIRE(stored.scale == 1.0 / full);
    const Record expected = test::make_test_record(0);
    REQUIRE(stored.integers.at(0, 3) == full);  // 1.5 clipped to full scale
    for (std::size_t k = 4; k < 200; ++k)
      // Rounding to the nearest step: error at most half a step.
      REQUIRE(std::abs(stored.samples.at(1, k) - expected.pcg.at(1, k)) <= 0.5 / full + 1e-7);
  }
}

TEST_CASE("parts can be left out and records renamed", "[bundle]") {
  test::TempDir dir;
  const fs::path path = dir.path() / "public.h5";
  {
    BundleWriter w(path, test_attributes());
    w.write_record(test::make_test_record(0), RecordParts::pcg_only(), "p0001");
    w.write_string_table("/key/id_map", StringTable{{"public_id", "record_id"}, {{"p0001"}, {"r000000"}}});
    w.finish();
  }
  BundleReader reader(path);
  REQUIRE(reader.record_ids() == std::vector<std::string>{"p0001"});
  RecordParts p = reader.parts("p0001");
  REQUIRE_FALSE(p.pcg_clean);
  REQUIRE_FALSE(p.events);
  REQUIRE_FALSE(p.states);
  REQUIRE(reader.read_events("p0001").empty());
  auto table = reader.read_string_table("/key/id_map");
  REQUIRE(table);
  REQUIRE(table->columns[1][0] == "r000000");
}

TEST_CASE("an existing target is refused without overwrite, and abandon leaves nothing", "[bundle]") {
  test::TempDir dir;
  const fs::path path = dir.path() / "b.h5";
  { std::ofstream(path) << "precious"; }
  REQUIRE_THROWS_AS(BundleWriter(path, test_attributes()), InputError);
  {
    BundleWriter w(dir.path() / "other.h5", test_attributes());
    w.write_record(test::make_test_record(0));
  }  // destroyed unfinished
  REQUIRE_FALSE(fs::exists(dir.path() / "other.h5"));
  REQUIRE_FALSE(fs::exists(dir.path() / "other.h5.partial"));
  std::ifstream in(path);
  std::string text;
  in >> text;
  REQUIRE(text == "precious");
}

TEST_CASE("the reader refuses files that are not bundles", "[bundle]") {
  test::TempDir dir;
  const fs::path text = dir.path() / "notes.h5";
  { std::ofstream(text) << "not hdf5 at all"; }
  REQUIRE_THROWS_AS(BundleReader(text), InputError);
  REQUIRE_THROWS_AS(BundleReader(dir.path() / "missing.h5"), InputError);

  const fs::path good = dir.path() / "b.h5";
  write_bundle(good, SampleFormat::float32, 1);
  const fs::path truncated = dir.path() / "truncated.h5";
  fs::copy_file(good, truncated);
  fs::resize_file(truncated, fs::file_size(good) / 2);
  REQUIRE_THROWS_AS(BundleReader(truncated), InputError);
}

// More rows than one /index chunk (4096), ids of growing width: the table is written a chunk at a
// time from the rows kept on disk, with the widths of the whole table, and leaves no file behind.
TEST_CASE("an index of several chunks reads back in order", "[bundle]") {
  test::TempDir dir;
  const fs::path path = dir.path() / "many.h5";
  const Record record = test::make_test_record(0, 2000);
  const BundleAttributes attributes = test_attributes();
  const EncodedRecord encoded =
      encode_record(record, RecordParts::all(), attributes.sample_format, attributes.compression);
  constexpr std::size_t n = 4100;
  {
    BundleWriter w(path, attributes);
    for (std::size_t i = 0; i < n; ++i) w.write_record(record, encoded, RecordParts::all(), "x" + std::to_string(i));
    REQUIRE(w.records_written() == n);
    w.finish();
  }
  REQUIRE(std::distance(fs::directory_iterator(dir.path()), fs::directory_iterator()) == 1);
  BundleReader reader(path);
  const std::vector<IndexRow>& index = reader.index();
  REQUIRE(index.size() == n);
  for (std::size_t i : {std::size_t(0), std::size_t(9), std::size_t(4095), std::size_t(4096), n - 1}) {
    CHECK(index[i].record_id == "x" + std::to_string(i));
    CHECK(index[i].population == record.subject.population);
    CHECK(index[i].n_samples == 2000);
    CHECK(index[i].snr_achieved_db == Approx(11.9));
  }
}
