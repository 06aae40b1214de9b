// `generate` end to end: plan the records of a recipe (or of one shard), synthesise them in
// parallel, write them in record order through one writer, and assemble the bundle. Safe against
// interruption: completed records live in segment files in "<output>.partial/" until the final
// bundle is renamed into place; --resume continues from them.
#pragma once

#include <cstdint>
#include <filesystem>
#include <functional>
#include <optional>
#include <string>

#include "bundle/progress.hpp"
#include "bundle/shard.hpp"
#include "core/record.hpp"
#include "core/subject.hpp"

namespace stethogen::bundle {

struct GenerateOptions {
  std::filesystem::path recipe;
  std::optional<std::filesystem::path> output;  // default: the recipe's dataset.output
  unsigned threads = 0;                          // 0 = all cores
  Shard shard;
  bool resume = false;
  bool force = false;
  ProgressMode progress = ProgressMode::lines;
  // Synthesis of one record; default gen::synthesize_record (tests substitute their own).
  std::function<Record(const SubjectSpec&)> synthesize;
};

struct GenerateResult {
  std::filesystem::path output;
  std::uint64_t records_written = 0;
  std::uint64_t records_skipped = 0;
  bool interrupted = false;  // stopped by SIGINT/SIGTERM; the run can be resumed
};

// Returns normally when complete or interrupted (see result.interrupted). Throws InputError for
// bad input (recipe, existing output without force, mismatched resume), RuntimeFailure for
// write errors and for a failing record under on_record_error = "stop".
GenerateResult generate(const GenerateOptions& options);

// The output path of a run: the -o path with "{shard}" replaced by the shard tag, or the
// recipe's output with ".shard-K-of-N" before the extension for a shard.
std::filesystem::path shard_output_path(const std::filesystem::path& path, const Shard& shard, bool explicit_path);

}  // namespace stethogen::bundle
