// Shard arithmetic and scheduler environments; the record-failure policy (stop / skip) of generate.
#include <catch2/catch.hpp>

#include <filesystem>
#include <fstream>
#include <regex>

#include "bundle/generate.hpp"
#include "bundle/reader.hpp"
#include "bundle/shard.hpp"
#include "core/error.hpp"
#include "record_fixture.hpp"
#include "run_helpers.hpp"
#include "temp_dir.hpp"

using namespace stethogen;
using namespace stethogen::bundle;
namespace fs = std::filesystem;

TEST_CASE("shards partition the records exactly once", "[shard]") {
  for (std::uint64_t n : {0ull, 1ull, 6ull, 7ull, 1000003ull})
    for (std::uint32_t count : {1u, 2u, 3u, 7u, 16u}) {
      std::uint64_t next = 0;
      for (std::uint32_t k = 0; k < count; ++k) {
        RecordRange r = shard_range(Shard{k, count, ""}, n);
        REQUIRE(r.begin == next);
        REQUIRE(r.end >= r.begin);
        // Contiguous blocks differ in size by at most one record.
        REQUIRE(r.size() <= n / count + 1);
        next = r.end;
      }
      REQUIRE(next == n);
    }
}

TEST_CASE("the shard comes from --shard, Slurm or Kubernetes", "[shard]") {
  REQUIRE(resolve_shard(std::string("2/3"), std::nullopt, {}).index == 1);
  REQUIRE_THROWS_AS(resolve_shard(std::string("0/3"), std::nullopt, {}), InputError);
  REQUIRE_THROWS_AS(resolve_shard(std::string("4/3"), std::nullopt, {}), InputError);
  REQUIRE_THROWS_AS(resolve_shard(std::string("x"), std::nullopt, {}), InputError);
  // An array --array=1-3 (Slurm numbers tasks from the array's minimum).
  Shard s = resolve_shard(std::nullopt, std::nullopt,
                          {{"SLURM_ARRAY_TASK_ID", "3"}, {"SLURM_ARRAY_TASK_MIN", "1"}, {"SLURM_ARRAY_TASK_MAX", "3"}});
  REQUIRE(s.index == 2);
  REQUIRE(s.count == 3);
  s = resolve_shard(std::nullopt, std::nullopt, {{"SLURM_ARRAY_TASK_ID", "0"}, {"SLURM_ARRAY_TASK_COUNT", "4"}});
  REQUIRE(s.index == 0);
  REQUIRE(s.count == 4);
  s = resolve_shard(std::nullopt, 5u, {{"JOB_COMPLETION_INDEX", "4"}});
  REQUIRE(s.index == 4);
  REQUIRE(s.count == 5);
  REQUIRE_THROWS_AS(resolve_shard(std::nullopt, std::nullopt, {{"JOB_COMPLETION_INDEX", "1"}}), InputError);
  REQUIRE_THROWS_AS(resolve_shard(std::nullopt, 2u, {{"JOB_COMPLETION_INDEX", "2"}}), InputError);
  REQUIRE(resolve_shard(std::nullopt, std::nullopt, {}).whole());
  REQUIRE(shard_output_path("out/part-{shard}.h5", Shard{1, 3, "SLURM_ARRAY_TASK_ID"}, true) == "out/part-2-of-3.h5");
  REQUIRE(shard_output_path("data.h5", Shard{0, 2, "--shard"}, false) == "data.shard-1-of-2.h5");
  REQUIRE_THROWS_AS(shard_output_path("data.h5", Shard{0, 2, "SLURM_ARRAY_TASK_ID"}, true), InputError);
}

namespace {

// Stands in for the pipeline: a fixture record carrying the planned subject; record 2 fails.
Record fake_synthesis(const SubjectSpec& subject) {
  if (subject.record_index == 2) throw RecordFailure(subject.record_id, "solver stalled at t = 1.2 s (test)");
  Record r = test::make_test_record(subject.record_index, 2000, subject.sample_rate_hz);
  std::vector<Site> sites = r.sites;
  r.subject = subject;
  r.subject.sites = sites;
  return r;
}

fs::path recipe_with_policy(const fs::path& dir, const std::string& policy) {
  std::string text = test::read_bytes(test::small_recipe());
  text = std::regex_replace(text, std::regex("on_record_error = \"stop\""), "on_record_error = \"" + policy + "\"");
  fs::path p = dir / (policy + ".toml");
  std::ofstream(p) << text;
  return p;
}

}  // namespace

TEST_CASE("a failing record is skipped and listed, or stops the run, per on_record_error", "[generate]") {
  test::TempDir dir;
  GenerateOptions o;
  o.threads = 2;
  o.progress = ProgressMode::quiet;
  o.synthesize = fake_synthesis;

  o.recipe = recipe_with_policy(dir.path(), "skip");
  o.output = dir.path() / "skip.h5";
  GenerateResult r = generate(o);
  REQUIRE(r.records_written == 5);
  REQUIRE(r.records_skipped == 1);
  BundleReader reader(*o.output);
  REQUIRE(reader.skipped().size() == 1);
  REQUIRE(reader.skipped()[0].record_id == "r000002");
  REQUIRE(reader.skipped()[0].reason.find("solver stalled") != std::string::npos);
  REQUIRE_FALSE(reader.has_record("r000002"));
  REQUIRE(reader.index().size() == 5);

  o.recipe = recipe_with_policy(dir.path(), "stop");
  o.output = dir.path() / "stop.h5";
  try {
    generate(o);
    FAIL("a failing record must stop the run");
  } catch (const RuntimeFailure& e) {
    std::string message = e.what();
    REQUIRE(message.find("r000002") != std::string::npos);
    REQUIRE(message.find("solver stalled") != std::string::npos);
  }
  REQUIRE_FALSE(fs::exists(*o.output));
}
