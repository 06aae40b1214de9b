// generate end to end through the binary: schema read back by h5py, determinism across threads and
// shards, merge refusals, and the safety rules (existing output, kill -9 + resume, full disk).
#include <catch2/catch.hpp>

#include <signal.h>
#include <unistd.h>

#include <algorithm>
#include <chrono>
#include <filesystem>
#include <fstream>
#include <regex>
#include <thread>

#include "bundle/scratch_file.hpp"
#include "run_helpers.hpp"
#include "temp_dir.hpp"

using namespace stethogen::test;
namespace fs = std::filesystem;

namespace {

// The run's scratch files (each holds the records of a quarter second, at most 16), in record order.
std::vector<fs::path> scratch_files(const fs::path& workdir) {
  std::vector<fs::path> found;
  std::error_code ec;
  for (const auto& e : fs::directory_iterator(workdir, ec))
    if (std::regex_match(e.path().filename().string(), std::regex(R"(rec-\d+\.stg)"))) found.push_back(e.path());
  std::sort(found.begin(), found.end());
  return found;
}
std::size_t count_scratch(const fs::path& workdir) { return scratch_files(workdir).size(); }

// The first record of a scratch file, from its name rec-<first>.stg.
std::uint64_t first_record(const fs::path& scratch) { return std::stoull(scratch.stem().string().substr(4)); }

// A longer variant of the small recipe, so a run can be interrupted part-way.
fs::path longer_recipe(const fs::path& dir, int count) {
  std::string text = read_bytes(small_recipe());
  text = std::regex_replace(text, std::regex("count = 4"), "count = " + std::to_string(count));
  text = std::regex_replace(text, std::regex("duration_s = 2"), "duration_s = 8");
  fs::path p = dir / "longer.toml";
  std::ofstream(p) << text;
  return p;
}

}  // namespace

TEST_CASE("generate writes a bundle that h5py reads with the documented schema", "[generate]") {
  TempDir dir;
  const fs::path out = dir.path() / "small.h5";
  RunResult r = run(generate_cmd(small_recipe(), out, "--threads 2"));
  INFO(r.output);
  REQUIRE(r.exit_code == 0);
  REQUIRE(fs::exists(out));
  REQUIRE_FALSE(fs::exists(out.string() + ".partial"));
  // h5py is the outside reader: every documented path, dtype and shape (tests/bundle/check_schema.py).
  RunResult py = run(python() + " " + quote(source_dir() / "tests/bundle/check_schema.py") + " " + quote(out));
  INFO(py.output);
  REQUIRE(py.exit_code == 0);
}

TEST_CASE("integer sample formats pass the schema check", "[generate]") {
  TempDir dir;
  for (const std::string fmt : {"int16", "int24"}) {
    std::string text = std::regex_replace(read_bytes(small_recipe()), std::regex("\"float32\""), "\"" + fmt + "\"");
    const fs::path recipe = dir.path() / (fmt + ".toml");
    std::ofstream(recipe) << text;
    const fs::path out = dir.path() / (fmt + ".h5");
    RunResult r = run(generate_cmd(recipe, out));
    INFO(r.output);
    REQUIRE(r.exit_code == 0);
    RunResult py = run(python() + " " + quote(source_dir() / "tests/bundle/check_schema.py") + " " + quote(out));
    INFO(py.output);
    REQUIRE(py.exit_code == 0);
  }
}

TEST_CASE("one thread and two threads give byte-identical bundles", "[generate]") {
  TempDir dir;
  REQUIRE(run(generate_cmd(small_recipe(), dir.path() / "t1.h5", "--threads 1")).exit_code == 0);
  REQUIRE(run(generate_cmd(small_recipe(), dir.path() / "t2.h5", "--threads 2")).exit_code == 0);
  REQUIRE(read_bytes(dir.path() / "t1.h5") == read_bytes(dir.path() / "t2.h5"));
}

TEST_CASE("three shards merged equal one run and merge refuses bad shard sets", "[generate][merge]") {
  TempDir dir;
  const fs::path whole = dir.path() / "whole.h5";
  REQUIRE(run(generate_cmd(small_recipe(), whole)).exit_code == 0);
  for (int k = 1; k <= 3; ++k) {
    RunResult r = run(generate_cmd(small_recipe(), dir.path() / ("part-" + std::to_string(k) + ".h5"),
                                   "--shard " + std::to_string(k) + "/3"));
    INFO(r.output);
    REQUIRE(r.exit_code == 0);
  }
  auto part = [&](int k) { return quote(dir.path() / ("part-" + std::to_string(k) + ".h5")); };
  const fs::path merged = dir.path() / "merged.h5";
  RunResult m = run(binary() + " merge " + part(3) + " " + part(1) + " " + part(2) + " -o " + quote(merged));
  INFO(m.output);
  REQUIRE(m.exit_code == 0);
  // h5py compares every object and attribute (the raw layout of copied records may differ by a
  // few bytes of HDF5 bookkeeping, so content, not bytes, is the contract for merge).
  RunResult cmp = run(python() + " " + quote(source_dir() / "tests/bundle/compare_bundles.py") + " " +
                      quote(merged) + " " + quote(whole));
  INFO(cmp.output);
  REQUIRE(cmp.exit_code == 0);

  RunResult missing = run(binary() + " merge " + part(1) + " " + part(3) + " -o " + quote(dir.path() / "x.h5"));
  REQUIRE(missing.exit_code == 2);
  REQUIRE(missing.output.find("missing") != std::string::npos);
  RunResult dup = run(binary() + " merge " + part(1) + " " + part(2) + " " + part(2) + " " + part(3) + " -o " +
                      quote(dir.path() / "x.h5"));
  REQUIRE(dup.exit_code == 2);
  REQUIRE(dup.output.find("more than once") != std::string::npos);
  // A shard of another recipe (different seed, so a different recipe hash).
  std::string other = std::regex_replace(read_bytes(small_recipe()), std::regex("seed = 4242"), "seed = 4243");
  std::ofstream(dir.path() / "other.toml") << other;
  REQUIRE(run(generate_cmd(dir.path() / "other.toml", dir.path() / "other-1.h5", "--shard 1/3")).exit_code == 0);
  RunResult foreign = run(binary() + " merge " + quote(dir.path() / "other-1.h5") + " " + part(2) + " " + part(3) +
                          " -o " + quote(dir.path() / "x.h5"));
  REQUIRE(foreign.exit_code == 2);
  REQUIRE(foreign.output.find("different recipe") != std::string::npos);
  REQUIRE_FALSE(fs::exists(dir.path() / "x.h5"));
}

TEST_CASE("an existing output is left untouched without --force", "[generate][safety]") {
  TempDir dir;
  const fs::path out = dir.path() / "small.h5";
  std::ofstream(out) << "the user's own file";
  RunResult r = run(generate_cmd(small_recipe(), out));
  REQUIRE(r.exit_code == 2);
  REQUIRE(r.output.find("--force") != std::string::npos);
  REQUIRE(read_bytes(out) == "the user's own file");
  REQUIRE(run(generate_cmd(small_recipe(), out, "--force")).exit_code == 0);
  REQUIRE(read_bytes(out).rfind("\x89HDF", 0) == 0);
}

namespace {

// `generate --threads 2` as a child process, killed without warning by interrupt_generate.
// extra: one more argument (e.g. "--resume"), or none.
pid_t start_generate(const fs::path& recipe, const fs::path& out, const char* extra = nullptr) {
  pid_t pid = fork();
  REQUIRE(pid >= 0);
  if (pid == 0) {
    setenv("SOURCE_DATE_EPOCH", "1700000000", 1);
    execl(binary().c_str(), binary().c_str(), "generate", recipe.c_str(), "-o", out.c_str(), "--quiet", "--threads",
          "2", extra, static_cast<char*>(nullptr));
    _exit(127);
  }
  return pid;
}

// Waits (at most 60 s) until ready() or the run has finished, then kills it with SIGKILL; the run
// must have been killed part-way.
template <typename Ready>
void interrupt_generate(pid_t pid, const fs::path& out, Ready ready) {
  const auto deadline = std::chrono::steady_clock::now() + std::chrono::seconds(60);
  while (!ready() && std::chrono::steady_clock::now() < deadline && !fs::exists(out))
    std::this_thread::sleep_for(std::chrono::milliseconds(5));
  kill(pid, SIGKILL);
  int status = 0;
  waitpid(pid, &status, 0);
  REQUIRE(WIFSIGNALED(status));  // killed part-way, not finished
}

// An uninterrupted reference bundle of an 80-record recipe, and a run of the same recipe killed
// (SIGKILL) once at least `saved` scratch files exist.
struct InterruptedRun {
  fs::path recipe, reference, out, workdir;
};

InterruptedRun interrupted_run(const fs::path& dir, const std::string& reference_threads, std::size_t saved) {
  InterruptedRun r;
  r.recipe = longer_recipe(dir, 80);
  r.reference = dir / "reference.h5";
  REQUIRE(run(generate_cmd(r.recipe, r.reference, reference_threads)).exit_code == 0);
  r.out = dir / "run.h5";
  r.workdir = r.out.string() + ".partial";
  interrupt_generate(start_generate(r.recipe, r.out), r.out, [&] { return count_scratch(r.workdir) >= saved; });
  return r;
}

// One flipped bit at `at`, as a power cut can leave a file whose contents were lost.
void flip_bit(const fs::path& file, std::size_t at, unsigned char mask) {
  std::string bytes = read_bytes(file);
  bytes.at(at) = static_cast<char>(bytes[at] ^ mask);
  std::ofstream(file, std::ios::binary | std::ios::trunc) << bytes;
}

// --resume notices the damage, makes the records from `first` on again and ends with the bundle
// an uninterrupted run makes.
void require_resume_remakes(const InterruptedRun& killed, std::uint64_t first) {
  RunResult resumed = run(generate_cmd(killed.recipe, killed.out, "--resume --threads 2"));
  INFO(resumed.output);
  REQUIRE(resumed.exit_code == 0);
  REQUIRE(resumed.output.find("damaged scratch file") != std::string::npos);
  REQUIRE(resumed.output.find("resuming at record " + std::to_string(first) + " ") != std::string::npos);
  REQUIRE(read_bytes(killed.out) == read_bytes(killed.reference));
}

}  // namespace

TEST_CASE("kill -9 leaves no final file and --resume completes an identical bundle", "[generate][safety]") {
  TempDir dir;
  // Some records saved, then killed without warning.
  const InterruptedRun killed = interrupted_run(dir.path(), "--threads 2", 1);
  const fs::path &recipe = killed.recipe, &reference = killed.reference, &out = killed.out, &workdir = killed.workdir;
  REQUIRE_FALSE(fs::exists(out));
  REQUIRE(fs::is_directory(workdir));

  RunResult again = run(generate_cmd(recipe, out));
  REQUIRE(again.exit_code == 2);  // an interrupted run is there: neither resumed nor discarded silently
  REQUIRE(again.output.find("--resume") != std::string::npos);
  RunResult resumed = run(generate_cmd(recipe, out, "--resume --threads 2"));
  INFO(resumed.output);
  REQUIRE(resumed.exit_code == 0);
  REQUIRE_FALSE(fs::exists(workdir));
  REQUIRE(read_bytes(out) == read_bytes(reference));
}

TEST_CASE("a damaged scratch file is made again on resume and the bundle is still identical", "[generate][safety]") {
  TempDir dir;
  const InterruptedRun killed = interrupted_run(dir.path(), "--threads 1", 2);
  // A renamed file with lost contents: one flipped bit in the second scratch file.
  const fs::path damaged = scratch_files(killed.workdir).at(1);
  const std::uint64_t first = first_record(damaged);
  REQUIRE(first >= 1);
  flip_bit(damaged, fs::file_size(damaged) / 2, 0x04);
  require_resume_remakes(killed, first);
}

TEST_CASE("a damaged chunk in the partial bundle is made again on resume and the bundle is still identical",
          "[generate][safety]") {
  TempDir dir;
  const InterruptedRun killed = interrupted_run(dir.path(), "--threads 1", 2);
  // The chunks are only in the partial bundle (the run's data file): one flipped bit in a chunk of
  // the first record of the second scratch file.
  const fs::path scratch = scratch_files(killed.workdir).at(1);
  const std::uint64_t first = first_record(scratch);
  REQUIRE(first >= 1);
  const stethogen::bundle::ScratchEntry entry = stethogen::bundle::load_scratch(scratch).at(0);
  REQUIRE(entry.record.has_value());
  REQUIRE(entry.generation == 1);
  flip_bit(killed.workdir / stethogen::bundle::data_file_name(1),
           entry.chunk_offsets.at(entry.chunk_offsets.size() / 2) + 3, 0x20);
  require_resume_remakes(killed, first);
}

TEST_CASE("kill -9 again while --resume rebuilds the bundle, then --resume: still identical", "[generate][safety]") {
  TempDir dir;
  const InterruptedRun killed = interrupted_run(dir.path(), "--threads 2", 2);
  const fs::path &recipe = killed.recipe, &reference = killed.reference, &out = killed.out, &workdir = killed.workdir;
  const std::uint64_t saved = first_record(scratch_files(workdir).at(1));
  // The resumed run rebuilds the saved records into a second data file: killed once that exists,
  // with records in both (or all in the second).
  interrupt_generate(start_generate(recipe, out, "--resume"), out,
                     [&] { return fs::exists(workdir / stethogen::bundle::data_file_name(2)); });
  REQUIRE(fs::exists(workdir / stethogen::bundle::data_file_name(2)));
  RunResult resumed = run(generate_cmd(recipe, out, "--resume --threads 1"));
  INFO(resumed.output);
  REQUIRE(resumed.exit_code == 0);
  // Nothing saved was lost on the way: at least the first run's first scratch file was taken as it was.
  REQUIRE(resumed.output.find("damaged") == std::string::npos);
  std::smatch m;
  REQUIRE(std::regex_search(resumed.output, m, std::regex(R"(resuming at record (\d+) )")));
  REQUIRE(std::stoull(m[1]) >= saved);
  REQUIRE_FALSE(fs::exists(workdir));
  REQUIRE(read_bytes(out) == read_bytes(reference));
}

TEST_CASE("SIGTERM stops cleanly and says how to resume", "[generate][safety]") {
  TempDir dir;
  const fs::path recipe = longer_recipe(dir.path(), 80);
  const fs::path out = dir.path() / "run.h5";
  const fs::path log = dir.path() / "log.txt";
  RunResult r = run(generate_cmd(recipe, out, "--threads 2") + " > " + quote(log) + " 2>&1 & pid=$!; " +
                    "for i in $(seq 1 6000); do n=$(ls " + quote(out.string() + ".partial") +
                    " 2>/dev/null | grep -c \"^rec-\"); [ \"$n\" -ge 2 ] && break; sleep 0.01; done; " +
                    "kill -TERM $pid; wait $pid; echo exit=$?");
  INFO(r.output << read_bytes(log));
  REQUIRE(r.output.find("exit=1") != std::string::npos);
  REQUIRE(read_bytes(log).find("--resume") != std::string::npos);
  REQUIRE_FALSE(fs::exists(out));
  RunResult resumed = run(generate_cmd(recipe, out, "--resume"));
  REQUIRE(resumed.exit_code == 0);
  REQUIRE(fs::exists(out));
}

TEST_CASE("a full disk is a clear error and leaves no final file", "[generate][safety]") {
  TempDir dir;
  const fs::path out = dir.path() / "small.h5";
  // ulimit -f (in 1024-byte blocks) caps every file the run writes, like a nearly full disk.
  RunResult r = run("ulimit -f 64; " + generate_cmd(small_recipe(), out));
  INFO(r.output);
  REQUIRE(r.exit_code == 1);
  REQUIRE(r.output.find("File too large") != std::string::npos);
  REQUIRE(r.output.find("no output written") != std::string::npos);
  REQUIRE_FALSE(fs::exists(out));
}

TEST_CASE("merge onto a full disk is a clear error and leaves nothing behind", "[merge][safety]") {
  TempDir dir;
  std::uintmax_t parts_bytes = 0;
  for (int k = 1; k <= 2; ++k) {
    const fs::path part = dir.path() / ("part-" + std::to_string(k) + ".h5");
    REQUIRE(run(generate_cmd(small_recipe(), part, "--shard " + std::to_string(k) + "/2")).exit_code == 0);
    parts_bytes += fs::file_size(part);
  }
  const fs::path out = dir.path() / "merged.h5";
  // A file-size limit (1024-byte blocks) of half the shards' size: the merged bundle cannot fit.
  const std::string limit = std::to_string(parts_bytes / 2048);
  RunResult r = run("ulimit -f " + limit + "; " + binary() + " merge " + quote(dir.path() / "part-1.h5") + " " +
                    quote(dir.path() / "part-2.h5") + " -o " + quote(out));
  INFO(r.output);
  REQUIRE(r.exit_code == 1);
  REQUIRE(r.output.find("File too large") != std::string::npos);
  REQUIRE_FALSE(fs::exists(out));
  REQUIRE_FALSE(fs::exists(out.string() + ".partial"));
}
