// Fault tests: the environment or the input files go wrong under the command line, which must
// answer with a clear error (exit 1 or 2, the file named, no crash) and lose nothing already
// written. Drives the built binary (STETHOGEN_BINARY; the sanitized one in a sanitizer build).
#include <catch2/catch.hpp>

#include <algorithm>
#include <filesystem>
#include <fstream>
#include <string>
#include <vector>

#include <fmt/format.h>

#include "../bundle/temp_dir.hpp"
#include "fault_helpers.hpp"

using namespace stethogen;
using test::run_stethogen;
using test::RunResult;
using test::snapshot;
namespace fs = std::filesystem;

namespace {

// A tiny dataset (1 kHz, 2 s, one site) of the fictional Brackwater night clinic.
std::string tiny_recipe(int count, int seed = 5) {
  return fmt::format(R"([dataset]
name = "brackwater_night"
seed = {}
sample_rate_hz = 1000
duration_s = 2
sites = ["mitral"]
sensor = "electronic"
[noise.ward]
sensor_white = {{ level_db = -12 }}
[[population]]
name = "night_rest"
count = {}
state = "rest"
snr_db = 15
noise = "ward"
)",
                     seed, count);
}

// A refused command: no crash, a failing exit code, an error line naming what went wrong.
void require_clear_error(const RunResult& r, const std::string& names) {
  INFO(r.output);
  CHECK(r.signal == 0);
  CHECK((r.exit_code == 1 || r.exit_code == 2));
  CHECK(r.output.find("error:") != std::string::npos);
  CHECK(r.output.find(names) != std::string::npos);
}

void generate_ok(const fs::path& dir, const std::vector<std::string>& args) {
  const RunResult r = run_stethogen(dir, args);
  INFO(r.output);
  REQUIRE(r.exit_code == 0);
}

// h5py (reference library) rewrites one root attribute of a bundle in place.
void set_root_attribute(const fs::path& file, const std::string& name, const std::string& python_value) {
  const std::string script = fmt::format(
      "import h5py, numpy as np\nf = h5py.File('{}', 'r+')\nf.attrs['{}'] = {}\nf.close()\n", file.string(), name,
      python_value);
  const fs::path py = file.parent_path() / "set_attribute.py";
  std::ofstream(py) << script;
  REQUIRE(std::system((std::string(std::getenv("STETHOGEN_PYTHON")) + " " + test::shell_quote(py.string())).c_str()) == 0);
  fs::remove(py);
}

}  // namespace

TEST_CASE("an output directory that cannot be written is refused and its contents kept", "[faults]") {
  test::TempDir dir;
  std::ofstream(dir.path() / "night.toml") << tiny_recipe(2);
  fs::create_directory(dir.path() / "locked");
  generate_ok(dir.path(), {"generate", "night.toml", "-o", "locked/old.h5", "--quiet"});
  const auto before = snapshot(dir.path() / "locked");

  test::ReadOnlyDir lock(dir.path() / "locked");
  if (!lock.ok()) {
    WARN("skipped: neither a read-only bind mount nor chattr +i works here, and root ignores permission bits");
    return;
  }
  INFO("read-only by " << lock.how());
  require_clear_error(run_stethogen(dir.path(), {"generate", "night.toml", "-o", "locked/new.h5", "--quiet"}), "locked/new.h5");
  require_clear_error(run_stethogen(dir.path(), {"generate", "night.toml", "-o", "locked/old.h5", "--force", "--quiet"}),
                      "locked/old.h5");
  require_clear_error(run_stethogen(dir.path(), {"export", "locked/old.h5", "--format", "csv", "--out", "locked/csv"}),
                      "locked/csv");
  require_clear_error(run_stethogen(dir.path(), {"split", "locked/old.h5", "--public", "locked/pub.h5", "--key", "key.h5"}),
                      "locked/pub.h5");
  CHECK(snapshot(dir.path() / "locked") == before);
  CHECK_FALSE(fs::exists(dir.path() / "key.h5"));
}

namespace {
// The folder entries directly under dir, for "nothing was left behind".
std::vector<std::string> entries(const fs::path& dir) {
  std::vector<std::string> names;
  for (const auto& e : fs::directory_iterator(dir)) names.push_back(e.path().filename().string());
  std::sort(names.begin(), names.end());
  return names;
}
}  // namespace

TEST_CASE("a target path that is a directory is refused and the directory kept", "[faults]") {
  test::TempDir dir;
  std::ofstream(dir.path() / "night.toml") << tiny_recipe(2);
  generate_ok(dir.path(), {"generate", "night.toml", "-o", "night.h5", "--quiet"});
  fs::create_directory(dir.path() / "taken.h5");
  std::ofstream(dir.path() / "taken.h5" / "notes.txt") << "the user's own file\n";
  const auto before = snapshot(dir.path());
  const auto listing = entries(dir.path());

  for (bool force : {false, true}) {
    const std::vector<std::string> f = force ? std::vector<std::string>{"--force"} : std::vector<std::string>{};
    auto with = [&](std::vector<std::string> args) {
      args.insert(args.end(), f.begin(), f.end());
      return args;
    };
    INFO("--force: " << force);
    // generate --force is the next test case.
    if (!force)
      require_clear_error(run_stethogen(dir.path(), with({"generate", "night.toml", "-o", "taken.h5", "--quiet"})), "taken.h5");
    require_clear_error(run_stethogen(dir.path(), with({"merge", "night.h5", "-o", "taken.h5"})), "taken.h5");
    require_clear_error(run_stethogen(dir.path(), with({"split", "night.h5", "--public", "taken.h5", "--key", "k.h5"})),
                        "taken.h5");
    require_clear_error(run_stethogen(dir.path(), with({"detect", "night.h5", "-o", "taken.h5"})), "taken.h5");
    // export's target is a folder: a regular file in its place is refused the same way.
    require_clear_error(run_stethogen(dir.path(), with({"export", "night.h5", "--format", "csv", "--out", "night.toml"})),
                        "night.toml");
    CHECK(snapshot(dir.path()) == before);
    CHECK(entries(dir.path()) == listing);
  }
}

// generate --force onto a directory used to synthesise every record before the final rename
// failed, leaving OUT.partial behind; it must refuse the directory before any work.
TEST_CASE("generate --force onto a directory refuses before any work and leaves nothing", "[faults]") {
  test::TempDir dir;
  std::ofstream(dir.path() / "night.toml") << tiny_recipe(2);
  fs::create_directory(dir.path() / "taken.h5");
  std::ofstream(dir.path() / "taken.h5" / "notes.txt") << "the user's own file\n";
  const auto before = snapshot(dir.path());
  const auto listing = entries(dir.path());
  const RunResult r = run_stethogen(dir.path(), {"generate", "night.toml", "-o", "taken.h5", "--force", "--quiet"});
  require_clear_error(r, "taken.h5");
  CHECK(r.exit_code == 2);
  // What the user had is kept.
  for (const auto& [name, content] : before) CHECK(test::read_text(dir.path() / name) == content);
  // Nothing left behind (no taken.h5.partial/ with synthesised records).
  CHECK(entries(dir.path()) == listing);
}

TEST_CASE("a shard of another format version is refused by merge, naming the shard", "[faults]") {
  test::TempDir dir;
  std::ofstream(dir.path() / "night.toml") << tiny_recipe(2);
  generate_ok(dir.path(), {"generate", "night.toml", "--shard", "1/2", "-o", "part1.h5", "--quiet"});
  generate_ok(dir.path(), {"generate", "night.toml", "--shard", "2/2", "-o", "part2.h5", "--quiet"});
  set_root_attribute(dir.path() / "part2.h5", "format_version", "np.array([2, 0], dtype=f.attrs['format_version'].dtype)");
  const auto before = snapshot(dir.path());

  const RunResult r = run_stethogen(dir.path(), {"merge", "part1.h5", "part2.h5", "-o", "all.h5"});
  require_clear_error(r, "part2.h5");
  CHECK(r.exit_code == 2);
  CHECK(r.output.find("version") != std::string::npos);
  CHECK_FALSE(fs::exists(dir.path() / "all.h5"));
  CHECK(snapshot(dir.path()) == before);

  // A shard with a damaged format_version attribute (one number instead of [major, minor]).
  set_root_attribute(dir.path() / "part2.h5", "format_version", "np.array([1], dtype=f.attrs['format_version'].dtype)");
  require_clear_error(run_stethogen(dir.path(), {"merge", "part1.h5", "part2.h5", "-o", "all.h5"}), "part2.h5");
  CHECK_FALSE(fs::exists(dir.path() / "all.h5"));
}

TEST_CASE("a bundle truncated mid-file gives a clear error in every reading verb", "[faults]") {
  test::TempDir dir;
  std::ofstream(dir.path() / "night.toml") << tiny_recipe(2);
  generate_ok(dir.path(), {"generate", "night.toml", "-o", "night.h5", "--quiet"});
  const std::string bytes = test::read_text(dir.path() / "night.h5");
  std::ofstream(dir.path() / "detections.csv") << "record_id,kind,time_s\nr000000,S1,0.5\n";

  for (double fraction : {0.5, 0.9}) {
    INFO("truncated to " << fraction << " of its size");
    std::ofstream(dir.path() / "cut.h5", std::ios::binary)
        << bytes.substr(0, static_cast<std::size_t>(fraction * static_cast<double>(bytes.size())));
    const auto before = snapshot(dir.path());
    require_clear_error(run_stethogen(dir.path(), {"inspect", "cut.h5"}), "cut.h5");
    require_clear_error(run_stethogen(dir.path(), {"inspect", "cut.h5", "--record", "r000001", "--json"}), "cut.h5");
    require_clear_error(run_stethogen(dir.path(), {"verify", "cut.h5"}), "cut.h5");
    require_clear_error(run_stethogen(dir.path(), {"score", "cut.h5", "detections.csv"}), "cut.h5");
    require_clear_error(run_stethogen(dir.path(), {"export", "cut.h5", "--format", "wav", "--out", "wav"}), "cut.h5");
    require_clear_error(run_stethogen(dir.path(), {"detect", "cut.h5", "-o", "found.csv"}), "cut.h5");
    require_clear_error(run_stethogen(dir.path(), {"split", "cut.h5", "--public", "p.h5", "--key", "k.h5"}), "cut.h5");
    require_clear_error(run_stethogen(dir.path(), {"merge", "night.h5", "cut.h5", "-o", "m.h5"}), "cut.h5");
    // Nothing half-written next to it, nothing else changed.
    CHECK(snapshot(dir.path()) == before);
  }
}

TEST_CASE("a recipe changed during --resume is refused and the finished records kept", "[faults]") {
  test::TempDir dir;
  const fs::path recipe = dir.path() / "night.toml";
  std::ofstream(recipe) << tiny_recipe(400);
  // Interrupt a run once its first records are on disk (SIGTERM: finish in-flight records, stop).
  // The binary is the background job itself, so $! is its pid; SIGTERM, not SIGINT, because a
  // non-interactive shell starts background jobs with SIGINT ignored.
  const std::string script = fmt::format(
      "cd {} || exit 1; {} generate night.toml -o night.h5 --threads 1 --quiet </dev/null >run.log 2>&1 & pid=$!; "
      "for i in $(seq 1 3000); do ls night.h5.partial/rec-*.stg >/dev/null 2>&1 && break; sleep 0.02; done; "
      "kill -TERM $pid; wait $pid; echo $? > status.txt",
      test::shell_quote(dir.path().string()), test::shell_quote(std::getenv("STETHOGEN_BINARY")));
  REQUIRE(std::system(script.c_str()) == 0);
  INFO(test::read_text(dir.path() / "run.log"));
  CHECK(test::read_text(dir.path() / "status.txt") != "0\n");  // interrupted, not finished
  REQUIRE(fs::is_directory(dir.path() / "night.h5.partial"));
  CHECK_FALSE(fs::exists(dir.path() / "night.h5"));
  fs::remove(dir.path() / "run.log");
  fs::remove(dir.path() / "status.txt");
  const auto run_before = snapshot(dir.path() / "night.h5.partial");
  std::size_t finished = 0;
  for (const auto& [name, content] : run_before) finished += name.starts_with("rec-") && name.ends_with(".stg");
  CHECK(finished >= 1);

  std::ofstream(recipe) << tiny_recipe(400, /*seed=*/6);
  const RunResult changed = run_stethogen(dir.path(), {"generate", "night.toml", "-o", "night.h5", "--resume"});
  require_clear_error(changed, "changed since the interrupted run");
  CHECK(changed.exit_code == 2);
  // Neither a plain run nor another shard may take over the interrupted run.
  require_clear_error(run_stethogen(dir.path(), {"generate", "night.toml", "-o", "night.h5"}), "night.h5.partial");
  std::ofstream(recipe) << tiny_recipe(400);
  require_clear_error(run_stethogen(dir.path(), {"generate", "night.toml", "-o", "night.h5", "--shard", "1/2", "--resume"}),
                      "shard");
  CHECK(snapshot(dir.path() / "night.h5.partial") == run_before);
  CHECK_FALSE(fs::exists(dir.path() / "night.h5"));
}
