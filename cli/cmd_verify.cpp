// `stethogen verify BUNDLE [--sample N] [--recipe-dir DIR]`: schema, checksums of every chunk,
// and a bit-for-bit regeneration of a sample of records. Exit 0 passed, 1 corruption or
// mismatch, 2 unreadable input or a check that could not run.
#include <unistd.h>

#include <cstdio>
#include <memory>
#include <string>

#include <fmt/format.h>

#include "bundle/reader.hpp"
#include "bundle/verify.hpp"
#include "cli/command.hpp"

namespace stethogen::cli {
namespace {

struct VerifyArgs {
  std::string bundle;
  std::size_t sample = 3;
  std::string recipe_dir;
  bool quiet = false;
};

int run_verify(const VerifyArgs& args) {
  const bundle::BundleReader reader(args.bundle);
  bundle::VerifyOptions options;
  options.sample = args.sample;
  if (!args.recipe_dir.empty()) options.recipe_dir = args.recipe_dir;
  const bool tty = ::isatty(STDERR_FILENO) != 0 && !args.quiet;
  bundle::VerifyProgress progress;
  if (tty)
    progress = [](const std::string& stage, std::size_t done, std::size_t total) {
      fmt::print(stderr, "\r{:<10} {}/{}{}", stage, done, total, done == total ? "\n" : "");
    };
  const bundle::VerifyReport report = bundle::verify_bundle(reader, options, progress);
  fmt::print("{}", bundle::format_verify_report(reader, report));
  return report.exit_code();
}

}  // namespace

Command add_verify(CLI::App& root) {
  CLI::App* app = root.add_subcommand(
      "verify", "Check a bundle: documented schema, checksums of every chunk, and a bit-for-bit "
                "regeneration of a sample of records from the embedded recipe");
  auto args = std::make_shared<VerifyArgs>();
  app->add_option("BUNDLE", args->bundle, "bundle file (HDF5)")->required();
  app->add_option("--sample", args->sample, "records to regenerate, spread over the populations (0: none)")
      ->capture_default_str();
  app->add_option("--recipe-dir", args->recipe_dir,
                  "folder of the original recipe, for the noise recordings it names (default: the bundle's folder)");
  app->add_flag("--quiet", args->quiet, "no progress on the terminal");
  return {app, [args] { return run_verify(*args); }};
}

}  // namespace stethogen::cli
