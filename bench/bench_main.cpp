// stethogen_bench: the benchmark of docs/performance.md (make bench). CPU times come from
// CLOCK_THREAD_CPUTIME_ID and wait4's rusage, so other load on the machine moves them little.
#include <unistd.h>

#include <cstdio>
#include <filesystem>
#include <fstream>
#include <algorithm>
#include <thread>

#include <CLI/CLI.hpp>
#include <fmt/format.h>

#include "bench/bench.hpp"
#include "core/allocator.hpp"
#include "recipe/compression.hpp"

namespace fs = std::filesystem;
using namespace stethogen;

namespace {

void print_stages(const bench::StageTimes& t) {
  fmt::print("Stages ({} records of {:.0f} s, 4 sites, 4 kHz, noise profile 'common'; thread CPU time):\n",
             t.records, t.audio_s / static_cast<double>(t.records));
  fmt::print("  {:<14} {:>10} {:>12}\n", "stage", "ms/record", "x real time");
  const auto row = [&](const char* name, double cpu) {
    fmt::print("  {:<14} {:>10.2f} {:>12.0f}\n", name, 1e3 * cpu / static_cast<double>(t.records), t.audio_s / cpu);
  };
  row("rhythm", t.rhythm);
  row("circulation", t.circulation);
  row("sources", t.sources);
  row("transmission", t.transmission);
  row("noise", t.noise);
  row("output stage", t.output);
  row("truth", t.truth);
  row("sum of stages", t.rhythm + t.circulation + t.sources + t.transmission + t.noise + t.output + t.truth);
  row("pipeline", t.pipeline);
  fmt::print("  ODE: {:.0f} steps and {:.0f} rhs evaluations per simulated second ({:.1f} s simulated per record, "
             "{:.1f} s of it run-in)\n",
             static_cast<double>(t.ode_steps) / t.simulated_s, static_cast<double>(t.rhs_evaluations) / t.simulated_s,
             t.simulated_s / static_cast<double>(t.records), t.run_in_simulated_s / static_cast<double>(t.records));
}

// Writing per compression setting; returns the recipe's (default) setting's total CPU seconds.
double print_writing(const std::vector<Record>& records, const recipe::Recipe& recipe, const bench::StageTimes& t,
                     const std::string& scratch) {
  fmt::print("\nWriting ({} records as generate writes them; thread CPU; sample format {}):\n", records.size(),
             name(recipe.dataset.sample_format));
  fmt::print("  {:<9} {:>10} {:>10} {:>11} {:>10} {:>12} {:>14}\n", "setting", "encode ms", "store ms", "assemble ms",
             "total ms", "x real time", "MB/audio hour");
  double chosen = 0;
  for (Compression c : kAllCompressions) {
    const bench::WritingTimes w = bench::time_writing(records, recipe, c, scratch);
    const double per = 1e3 / static_cast<double>(w.records);
    fmt::print("  {:<9} {:>10.2f} {:>10.2f} {:>11.2f} {:>10.2f} {:>12.0f} {:>14.1f}{}\n", name(c), w.encode_s * per,
               w.store_s * per, w.assemble_s * per, w.total_s() * per, w.audio_s / w.total_s(),
               static_cast<double>(w.bytes) / 1e6 / (w.audio_s / 3600.0), c == recipe.dataset.compression ? "  (recipe)" : "");
    if (c == recipe.dataset.compression) chosen = w.total_s();
  }
  fmt::print("  encode (filtering, staging) runs on the synthesis threads; store (into the bundle, scratch file) and "
             "assemble (index, close) on generate's single HDF5 thread\n");
  const double whole = t.pipeline + chosen;
  fmt::print("Whole pipeline (synthesis + writing, compression \"{}\"): {:.2f} ms per record, {:.0f}x real time on "
             "one core\n", name(recipe.dataset.compression), 1e3 * whole / static_cast<double>(t.records),
             t.audio_s / whole);
  return chosen;
}

bench::ProcessRun generate(const std::string& binary, const std::string& source, const std::string& scratch,
                           std::uint64_t count, double duration, unsigned threads) {
  const std::string recipe_path = scratch + fmt::format("/bench_{}_{}.toml", count, duration);
  std::ofstream(recipe_path) << bench::bench_recipe_text(source, count, duration);
  const std::string out = scratch + "/bench_out.h5";
  bench::ProcessRun r = bench::run_process({binary, "generate", recipe_path, "-o", out, "--threads",
                                            std::to_string(threads), "--force", "--quiet"});
  if (r.exit_code != 0) throw std::runtime_error(fmt::format("{} generate exited with {}", binary, r.exit_code));
  fs::remove(out);
  return r;
}

}  // namespace

int main(int argc, char** argv) {
  stethogen::configure_allocator();  // as the stethogen executable does
  CLI::App app{"stethogen benchmark (docs/performance.md)"};
  std::string source = STETHOGEN_SOURCE_DIR, binary, python = "/usr/bin/python3", scratch;
  // 160: a run's start (FFTW plans) and end (the last records, the final assembly) leave a core
  // idle for about 0.3 s: with 40 records `generate` measured 1.50-1.65x on two threads, with
  // 160 records 1.81-1.96x (docs/performance.md).
  std::uint64_t stage_records = 5, thread_records = 160;
  double memory_duration_s = 5.0;
  std::vector<std::uint64_t> memory_counts{100, 1000};
  bool skip_reference = false, skip_processes = false;
  double engine_max_step_ms = 0, engine_tolerance = 1e-5;
  int repeats = 2;
  app.add_option("--source", source, "source tree (for bench/bench.toml and validation/)");
  app.add_option("--binary", binary, "stethogen executable for the thread and memory runs")->required();
  app.add_option("--python", python, "interpreter with numpy and scipy");
  app.add_option("--scratch", scratch, "directory for temporary files (default: a new one under /tmp)");
  app.add_option("--records", stage_records, "records for the stage timings");
  app.add_option("--thread-records", thread_records, "30 s records for the 1- and 2-thread runs");
  app.add_option("--repeats", repeats, "runs of each thread measurement; the fastest counts")->check(CLI::Range(1, 10));
  app.add_option("--memory-counts", memory_counts, "record counts of the peak-memory runs, e.g. 100,1000")->delimiter(',');
  app.add_option("--memory-duration", memory_duration_s, "record length (s) of the peak-memory runs");
  app.add_flag("--skip-reference", skip_reference, "leave out the Python side-by-side run");
  app.add_flag("--skip-processes", skip_processes, "leave out the thread and memory runs");
  app.add_option("--engine-max-step-ms", engine_max_step_ms,
                 "also run record 0's engine with this step limit (and --engine-tolerance) against the defaults");
  app.add_option("--engine-tolerance", engine_tolerance, "absolute and relative tolerance for --engine-max-step-ms");
  CLI11_PARSE(app, argc, argv);
  std::setvbuf(stdout, nullptr, _IOLBF, 0);  // progress visible when piped to a file
  try {
    if (scratch.empty()) scratch = fmt::format("/tmp/stethogen_bench_{}", ::getpid());
    fs::create_directories(scratch);
    double load[3] = {0, 0, 0};
    if (getloadavg(load, 3) > 0) fmt::print("Machine: {} cores, load average {:.1f}\n", std::thread::hardware_concurrency(), load[0]);
    const bench::MachineSpeed speed = bench::measure_machine_speed();
    fmt::print("  {}; SHA-256 (OpenSSL, one thread) {:.0f} MB/s: the yardstick for comparing machines\n",
               speed.cpu_model, speed.sha256_mb_per_s);

    {
      const recipe::Recipe stage_recipe = bench::bench_recipe(source, stage_records, 30.0);
      std::vector<Record> records;
      const bench::StageTimes stages = bench::time_stages(stage_recipe, stage_records, &records);
      print_stages(stages);
      print_writing(records, stage_recipe, stages, scratch);
    }
    if (engine_max_step_ms > 0)
      bench::compare_engine_settings(bench::bench_recipe(source, 1, 30.0), 1e-3 * engine_max_step_ms, engine_tolerance);
    bool ok = true;
    if (!skip_reference)
      ok = bench::compare_with_reference(bench::bench_recipe(source, 1, 30.0), source, python, scratch);
    if (!skip_processes) {
      const recipe::Recipe threads_recipe = bench::bench_recipe(source, thread_records, 30.0);
      fmt::print("\nsynthesize_record alone, {} records of 30 s (best of {}):\n", thread_records, repeats);
      double alone[3] = {0, 0, 0};
      for (unsigned threads : {1u, 2u}) {
        bench::SynthesisRun best;
        for (int k = 0; k < repeats; ++k) {
          bench::SynthesisRun r = bench::synthesis_records_per_s(threads_recipe, thread_records, threads);
          if (r.records_per_s > best.records_per_s) best = r;
        }
        alone[threads] = best.records_per_s;
        fmt::print("  {} thread{}: {:.2f} records/s, {:.1f} ms CPU per record\n", threads, threads > 1 ? "s" : "",
                   best.records_per_s, 1e3 * best.cpu_s_per_record);
      }
      fmt::print("  2 threads / 1 thread: {:.2f}x\n", alone[2] / alone[1]);
      fmt::print("\nstethogen generate ({} records of 30 s, best of {}; workers synthesise and filter chunks, one HDF5 "
                 "thread stores them):\n", thread_records, repeats);
      double rate[3] = {0, 0, 0};
      for (unsigned threads : {1u, 2u}) {
        bench::ProcessRun r = generate(binary, source, scratch, thread_records, 30.0, threads);
        for (int k = 1; k < repeats; ++k) {
          bench::ProcessRun again = generate(binary, source, scratch, thread_records, 30.0, threads);
          if (again.wall_s < r.wall_s) r = again;
        }
        rate[threads] = static_cast<double>(thread_records) / r.wall_s;
        fmt::print("  --threads {}: {:.2f} records/s (wall {:.2f} s, CPU {:.2f} s = {:.1f} ms per record, {:.0f}x real "
                   "time per CPU second, max RSS {:.1f} MiB)\n",
                   threads, rate[threads], r.wall_s, r.cpu_s, 1e3 * r.cpu_s / static_cast<double>(thread_records),
                   30.0 * static_cast<double>(thread_records) / r.cpu_s, static_cast<double>(r.max_rss_kib) / 1024.0);
      }
      getloadavg(load, 3);
      fmt::print("  2 threads / 1 thread: {:.2f}x (wall clock; depends on what else the machine runs: load average "
                 "now {:.1f})\n", rate[2] / rate[1], load[0]);
      fmt::print("\nPeak memory (stethogen generate --threads 2, records of {:.0f} s):\n", memory_duration_s);
      for (std::uint64_t count : memory_counts) {
        bench::ProcessRun r = generate(binary, source, scratch, count, memory_duration_s, 2);
        fmt::print("  {:>5} records: max RSS {:.1f} MiB, {:.2f} records/s, CPU {:.2f} s\n", count,
                   static_cast<double>(r.max_rss_kib) / 1024.0, static_cast<double>(count) / r.wall_s, r.cpu_s);
      }
    }
    fs::remove_all(scratch);
    return ok ? 0 : 1;
  } catch (const std::exception& e) {
    fmt::print(stderr, "stethogen_bench: {}\n", e.what());
    return 2;
  }
}
