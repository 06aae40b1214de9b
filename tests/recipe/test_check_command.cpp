// `stethogen check` through the executable: exit codes, the printed plan and its totals.
#include <catch2/catch.hpp>

#include <sys/wait.h>
#include <unistd.h>

#include <cstdio>
#include <cstdlib>
#include <filesystem>
#include <string>

#include <fmt/format.h>

#include "recipe/plan.hpp"
#include "recipe/recipe.hpp"
#include "recipe_test_util.hpp"

namespace fs = std::filesystem;
using namespace stethogen;

namespace {

struct Run {
  int exit_code = -1;
  std::string out;
};

Run run_binary(const std::string& args) {
  const char* binary = std::getenv("STETHOGEN_BINARY");
  REQUIRE(binary);
  std::FILE* p = popen(("'" + std::string(binary) + "' " + args + " 2>&1").c_str(), "r");
  REQUIRE(p);
  Run r;
  char buf[4096];
  while (std::fgets(buf, sizeof buf, p)) r.out += buf;
  int status = pclose(p);
  REQUIRE(WIFEXITED(status));
  r.exit_code = WEXITSTATUS(status);
  return r;
}

}  // namespace

TEST_CASE("check prints the demo plan with its totals and writes nothing", "[recipe][cli]") {
  const std::string demo = recipe::test::demo_path();
  const auto before = fs::last_write_time(demo);
  Run run = run_binary("check '" + demo + "'");
  INFO(run.out);
  REQUIRE(run.exit_code == 0);
  recipe::Recipe r = recipe::load_recipe(demo);
  double seconds = 0;
  for (std::uint64_t i = 0; i < recipe::record_count(r); ++i)
    seconds += recipe::plan_record(r, i).params.duration_s;
  CHECK_THAT(run.out, Catch::Contains(fmt::format("{} populations, {} records, {:.3g} hours of audio",
                                                  r.populations.size(), recipe::record_count(r),
                                                  seconds / 3600)));
  CHECK_THAT(run.out, Catch::Contains("sha256 " + r.sha256_hex));
  for (const auto& p : r.populations) CHECK_THAT(run.out, Catch::Contains("\n" + p.name + " "));
  CHECK_FALSE(fs::exists(r.dataset.output));
  CHECK(fs::last_write_time(demo) == before);
}

TEST_CASE("check reports drawn ranges and the estimated size", "[recipe][cli]") {
  const fs::path dir = fs::temp_directory_path() / ("stethogen-check-" + std::to_string(::getpid()));
  fs::create_directories(dir);
  const fs::path path = dir / "small.toml";
  {
    std::FILE* f = std::fopen(path.c_str(), "w");
    REQUIRE(f);
    std::fputs("[dataset]\nname = \"small\"\nsample_rate_hz = 2000\nduration_s = 10\n"
               "sites = [\"mitral\", \"aortic\"]\nsample_format = \"int16\"\n"
               "[[population]]\nname = \"p\"\ncount = 3\nstate = \"rest\"\nheart_rate_bpm = 72\n"
               "chest_wall_mm = { uniform = [10, 12] }\n", f);
    std::fclose(f);
  }
  Run run = run_binary("check '" + path.string() + "'");
  INFO(run.out);
  REQUIRE(run.exit_code == 0);
  // The row: name, state, records, grade, duration, SNR, noise; then the other parameters.
  CHECK_THAT(run.out, Catch::Matches(R"([\s\S]*\np +rest +3 +- +10 s +- +-\n +[^\n]*heart_rate_bpm 72 bpm[\s\S]*)"));
  // 3 records x 10 s x 2000 Hz x 2 sites x (2 + 2 bytes of int16 pcg and clean + 1 label byte).
  CHECK_THAT(run.out, Catch::Contains(fmt::format("estimated output {:.3g} kB", 3 * 10 * 2000 * 2 * 5 / 1000.0)));
  recipe::Recipe r = recipe::load_recipe(path.string());
  double lo = 1e9, hi = -1e9;
  for (std::uint64_t i = 0; i < 3; ++i) {
    double w = recipe::plan_record(r, i).params.chest_wall_mm;
    lo = std::min(lo, w);
    hi = std::max(hi, w);
  }
  CHECK_THAT(run.out, Catch::Contains(fmt::format("chest_wall_mm {:.4g}..{:.4g} mm", lo, hi)));
  CHECK(std::distance(fs::directory_iterator(dir), fs::directory_iterator()) == 1);
  fs::remove_all(dir);
}

TEST_CASE("check refuses a missing recipe and bad arguments with code 2", "[recipe][cli]") {
  CHECK(run_binary("check /nonexistent/x.toml").exit_code == 2);
  CHECK_THAT(run_binary("check /nonexistent/x.toml").out,
             Catch::Contains("error: /nonexistent/x.toml: cannot read recipe: no such file"));
  CHECK(run_binary("check").exit_code == 2);
  CHECK(run_binary("check --help").exit_code == 0);
}
