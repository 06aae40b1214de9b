// Splitting a dataset across machines: shard k of n owns the contiguous block of record indices
// [floor(k*N/n), floor((k+1)*N/n)) of the N records, so every record belongs to exactly one shard.
// On the command line shards are 1-based ("--shard 2/3" is the second of three); internally 0-based.
#pragma once

#include <cstdint>
#include <map>
#include <optional>
#include <string>

namespace stethogen::bundle {

struct Shard {
  std::uint32_t index = 0;  // 0-based
  std::uint32_t count = 1;
  std::string source;       // where it came from, for messages ("--shard", "SLURM_ARRAY_TASK_ID", ...)

  bool whole() const { return count == 1; }
  // "2-of-3" (1-based), used in file names.
  std::string tag() const;
};

struct RecordRange {
  std::uint64_t begin = 0, end = 0;  // [begin, end)
  std::uint64_t size() const { return end - begin; }
};

RecordRange shard_range(const Shard& shard, std::uint64_t record_count);

// Parses "K/N" with 1 <= K <= N (InputError otherwise).
Shard parse_shard(const std::string& text);

// The shard of this process: --shard if given; else a Slurm array task (SLURM_ARRAY_TASK_ID
// with SLURM_ARRAY_TASK_COUNT, or SLURM_ARRAY_TASK_MIN/MAX; the array may start at any index);
// else a Kubernetes Indexed Job (JOB_COMPLETION_INDEX, 0-based, with shard_count given);
// else the whole dataset. env maps variable names to values (tests pass their own).
Shard resolve_shard(const std::optional<std::string>& shard_option, std::optional<std::uint32_t> shard_count,
                    const std::map<std::string, std::string>& env);

// The variables resolve_shard reads, taken from the process environment.
std::map<std::string, std::string> shard_environment();

}  // namespace stethogen::bundle
