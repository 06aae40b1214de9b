// The benchmark (make bench, docs/performance.md): stage timings, thread scaling, peak memory and
// the side-by-side Python reference, for the demo settings of bench/bench.toml.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "core/record.hpp"
#include "core/subject.hpp"
#include "recipe/recipe.hpp"

namespace stethogen::bench {

// CPU time of the calling thread (s): immune to other processes on a shared machine.
double thread_cpu_s();

// The CPU and its single-thread SHA-256 throughput (OpenSSL, MB/s; 0 if unavailable), printed
// beside the figures so that runs on different machines can be compared (bench/machine_speed.cpp).
struct MachineSpeed {
  std::string cpu_model;
  double sha256_mb_per_s = 0;
};
MachineSpeed measure_machine_speed();

// bench/bench.toml with COUNT and DURATION substituted.
std::string bench_recipe_text(const std::string& source_dir, std::uint64_t count, double duration_s);
recipe::Recipe bench_recipe(const std::string& source_dir, std::uint64_t count, double duration_s);

// CPU seconds per stage, summed over records.
struct StageTimes {
  double rhythm = 0, circulation = 0, sources = 0, transmission = 0, noise = 0, output = 0, truth = 0;
  double pipeline = 0;  // synthesize_record as a whole
  double audio_s = 0;   // recorded seconds
  double simulated_s = 0;  // seconds the ODE covered (run-in + series)
  std::uint64_t ode_steps = 0, rhs_evaluations = 0;
  double run_in_simulated_s = 0;
  std::uint64_t records = 0;
};
// Also hands back the synthesised records (for time_writing) when `kept` is given.
StageTimes time_stages(const recipe::Recipe& recipe, std::uint64_t records, std::vector<Record>* kept = nullptr);

// Writing the records as `generate` does (bench/writing_timing.cpp): thread CPU seconds summed
// over records, and the final bundle's size.
struct WritingTimes {
  double encode_s = 0;    // chunk filtering (shuffle, deflate, Fletcher32), staging: synthesis threads
  double store_s = 0;     // the staged records into the bundle, their scratch files: the single HDF5 thread
  double assemble_s = 0;  // finishing the bundle (index, flush, close): single thread, after the last record
  double audio_s = 0;
  std::uint64_t bytes = 0, records = 0;
  double total_s() const { return encode_s + store_s + assemble_s; }
};
WritingTimes time_writing(const std::vector<Record>& records, const recipe::Recipe& recipe, Compression compression,
                          const std::string& scratch_dir);

// A child process's wall time, CPU time and peak resident memory.
struct ProcessRun {
  double wall_s = 0, cpu_s = 0;
  long max_rss_kib = 0;
  int exit_code = -1;
};
ProcessRun run_process(const std::vector<std::string>& argv);

// One record through validation/reference_model.py; prints the comparison, returns false when
// the cross-check fails.
bool compare_with_reference(const recipe::Recipe& recipe, const std::string& source_dir, const std::string& python,
                            const std::string& scratch_dir);

// synthesize_record alone on this many threads (no writing): records per wall second.
struct SynthesisRun {
  double records_per_s = 0;      // wall clock
  double cpu_s_per_record = 0;   // process CPU: stays flat with more threads unless they contend
};
SynthesisRun synthesis_records_per_s(const recipe::Recipe& recipe, std::uint64_t records, unsigned threads);

// Record 0's engine run with another step limit and tolerance against the defaults.
void compare_engine_settings(const recipe::Recipe& recipe, double max_step_s, double tolerance);

}  // namespace stethogen::bench
