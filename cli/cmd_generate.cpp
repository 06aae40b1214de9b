// `stethogen generate RECIPE`: synthesises the recipe's records in parallel and writes the bundle
// (bundle/generate.hpp does the work; this file only maps options).
#include <memory>
#include <optional>
#include <string>

#include <fmt/format.h>

#include "bundle/generate.hpp"
#include "cli/command.hpp"

namespace stethogen::cli {
namespace {

struct GenerateArgs {
  std::string recipe;
  std::string output;
  unsigned threads = 0;
  std::string shard;
  std::uint32_t shard_count = 0;
  bool resume = false, force = false, quiet = false;
};

int run_generate(const GenerateArgs& a) {
  bundle::GenerateOptions o;
  o.recipe = a.recipe;
  if (!a.output.empty()) o.output = a.output;
  o.threads = a.threads;
  o.shard = bundle::resolve_shard(a.shard.empty() ? std::nullopt : std::optional<std::string>(a.shard),
                                  a.shard_count ? std::optional<std::uint32_t>(a.shard_count) : std::nullopt,
                                  bundle::shard_environment());
  o.resume = a.resume;
  o.force = a.force;
  o.progress = bundle::progress_mode(a.quiet);
  if (!o.shard.whole() && !a.quiet)
    fmt::print(stderr, "generate: shard {}/{} (from {})\n", o.shard.index + 1, o.shard.count, o.shard.source);
  bundle::GenerateResult r = bundle::generate(o);
  if (r.interrupted) return kExitRuntime;
  if (!a.quiet)
    fmt::print(stderr, "generate: wrote {} ({} records{})\n", r.output.string(), r.records_written,
               r.records_skipped ? fmt::format(", {} skipped: listed in /skipped", r.records_skipped) : "");
  return kExitOk;
}

}  // namespace

Command add_generate(CLI::App& root) {
  CLI::App* app = root.add_subcommand(
      "generate", "Synthesise the records of a recipe and write the dataset bundle (HDF5, docs/bundle-format.md)");
  auto a = std::make_shared<GenerateArgs>();
  app->add_option("RECIPE", a->recipe, "recipe file (TOML), see docs/recipe.md")->required();
  app->add_option("-o,--output", a->output,
                  "output bundle (default: the recipe's dataset.output); '{shard}' is replaced by the shard, "
                  "e.g. part-{shard}.h5 -> part-2-of-3.h5");
  app->add_option("--threads", a->threads, "threads synthesising and encoding records (default: all cores; HDF5 writes on the first); the output does not depend on it")
      ->check(CLI::Range(1u, 4096u));
  app->add_option("--shard", a->shard,
                  "K/N: write only shard K of N (1-based, contiguous blocks of records); default from "
                  "SLURM_ARRAY_TASK_ID or JOB_COMPLETION_INDEX when set (docs/cluster.md)");
  app->add_option("--shard-count", a->shard_count,
                  "number of shards when the shard index comes from JOB_COMPLETION_INDEX")
      ->check(CLI::Range(1u, 1000000u));
  app->add_flag("--resume", a->resume, "continue an interrupted run (same recipe, same shard)");
  app->add_flag("--force", a->force, "replace an existing output, or discard an interrupted run");
  app->add_flag("--quiet", a->quiet, "no progress output (failures are still reported)");
  return {app, [a] { return run_generate(*a); }};
}

}  // namespace stethogen::cli
