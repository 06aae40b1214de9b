// `stethogen validate [--report DIR] [--threads N] [--force]`: the physiology report against
// published values (validation/, docs/validation.md). Exit 1 if any check fails.
#include <cstdio>
#include <memory>
#include <string>
#include <thread>

#include <fmt/format.h>

#include "cli/command.hpp"
#include "validation/validate.hpp"

namespace stethogen::cli {
namespace {

struct ValidateArgs {
  std::string report;
  unsigned threads = 0;
  bool force = false;
};

int run_validate(const ValidateArgs& a) {
  validation::ValidateOptions options;
  if (!a.report.empty()) options.report_dir = a.report;
  options.threads = a.threads;
  options.force = a.force;
  if (const char* py = std::getenv("STETHOGEN_PYTHON"); py && *py) options.python = py;
  const validation::ValidateOutcome outcome = validation::run_validation(options);
  fmt::print("{}", validation::format_table(outcome.results));
  const std::size_t failed = validation::count_failures(outcome.results);
  fmt::print("validate: {} checks, {} passed, {} failed\n", outcome.results.size(), outcome.results.size() - failed,
             failed);
  if (options.report_dir) {
    fmt::print("validate: report in {}: {}\n", a.report, fmt::join(outcome.report_files, ", "));
    if (!outcome.figure_note.empty()) fmt::print(stderr, "warning: figures not drawn: {}\n", outcome.figure_note);
  }
  return failed ? kExitRuntime : kExitOk;
}

}  // namespace

Command add_validate(CLI::App& root) {
  CLI::App* app = root.add_subcommand(
      "validate", "Synthesise the validation recipes and compare the physiology and the sounds with published values");
  auto args = std::make_shared<ValidateArgs>();
  app->add_option("--report", args->report, "also write report.md, checks.csv and the figures (PNG) into this folder");
  app->add_option("--threads", args->threads, "worker threads (default: all cores); the result does not depend on it")
      ->check(CLI::Range(1u, 1024u));
  app->add_flag("--force", args->force, "replace report files already in the --report folder");
  return {app, [args] { return run_validate(*args); }};
}

}  // namespace stethogen::cli
