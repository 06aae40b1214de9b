// Memory stays flat in the record count only if every HDF5 object the adapter opens is closed
// again: a file with one object left open stays open (with its metadata cache) after H5Fclose.
// HDF5's own count of open identifiers is the outside measure.
#include <catch2/catch.hpp>

#include <hdf5.h>

#include <filesystem>

#include "bundle/merge.hpp"
#include "bundle/reader.hpp"
#include "bundle/writer.hpp"
#include "record_fixture.hpp"
#include "temp_dir.hpp"

using namespace stethogen;
using namespace stethogen::bundle;
namespace fs = std::filesystem;

namespace {

ssize_t open_hdf5_objects() { return H5Fget_obj_count(H5F_OBJ_ALL, H5F_OBJ_ALL); }

}  // namespace

TEST_CASE("writing, reading and merging bundles leaves no HDF5 object open", "[bundle][memory]") {
  test::TempDir dir;
  BundleAttributes a;
  a.recipe_toml = "[dataset]\nname = \"harbour\"\n";
  a.recipe_sha256 = std::string(64, 'b');
  a.record_count = 3;
  std::vector<fs::path> parts;
  for (std::uint64_t i = 0; i < 3; ++i) {
    parts.push_back(dir.path() / ("part" + std::to_string(i) + ".h5"));
    BundleWriter w(parts.back(), a);
    w.write_record(test::make_test_record(i));
    w.finish();
    CHECK(open_hdf5_objects() == 0);
  }
  {
    BundleReader r(parts[0]);
    CHECK(r.index().size() == 1);
    Record back = r.read_record(r.record_ids().front());
    CHECK(back.pcg.n_samples > 0);
  }
  CHECK(open_hdf5_objects() == 0);
  MergeSpec spec;
  merge_bundles(parts, dir.path() / "merged.h5", spec);
  CHECK(open_hdf5_objects() == 0);
}
