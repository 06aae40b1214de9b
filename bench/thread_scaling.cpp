// Synthesis alone on 1..N threads (no writing): records per wall second, each thread taking the
// next record index from a shared counter, as bundle/generate.cpp's workers do.
#include <time.h>

#include <atomic>
#include <chrono>
#include <thread>

#include "bench/bench.hpp"
#include "generator/pipeline.hpp"
#include "recipe/plan.hpp"

namespace stethogen::bench {

namespace {

double process_cpu_s() {
  timespec ts{};
  clock_gettime(CLOCK_PROCESS_CPUTIME_ID, &ts);
  return static_cast<double>(ts.tv_sec) + 1e-9 * static_cast<double>(ts.tv_nsec);
}

}  // namespace

SynthesisRun synthesis_records_per_s(const recipe::Recipe& recipe, std::uint64_t records, unsigned threads) {
  std::atomic<std::uint64_t> next{0};
  const double cpu0 = process_cpu_s();
  const auto start = std::chrono::steady_clock::now();
  std::vector<std::thread> pool;
  for (unsigned t = 0; t < threads; ++t)
    pool.emplace_back([&] {
      for (std::uint64_t i = next++; i < records; i = next++) {
        Record r = gen::synthesize_record(recipe::plan_record(recipe, i));
        if (r.pcg.data.empty()) throw std::runtime_error("empty record");
      }
    });
  for (std::thread& t : pool) t.join();
  const double wall = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  return {static_cast<double>(records) / wall, (process_cpu_s() - cpu0) / static_cast<double>(records)};
}

}  // namespace stethogen::bench
