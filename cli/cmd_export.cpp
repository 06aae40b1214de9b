// `stethogen export BUNDLE --format wav|flac|csv --out DIR [--bits 16|24|float] [--clean]
// [--records ID,...] [--force]`: audio per record and site, or the truth as CSV (docs/export.md).
#include <cstdio>
#include <memory>
#include <string>
#include <vector>

#include <fmt/format.h>

#include "bundle/export.hpp"
#include "bundle/reader.hpp"
#include "cli/command.hpp"
#include "core/error.hpp"

namespace stethogen::cli {
namespace {

struct ExportArgs {
  std::string bundle;
  std::string format;
  std::string out;
  std::string bits = "16";
  std::vector<std::string> records;
  bool clean = false;
  bool force = false;
};

int run_export(const ExportArgs& args) {
  bundle::ExportOptions options;
  options.format = *bundle::parse_export_format(args.format);  // CLI11 checked the choice
  options.encoding = *bundle::parse_audio_encoding(args.bits);
  options.out_dir = args.out;
  options.records = args.records;
  options.clean = args.clean;
  options.force = args.force;
  if (options.format == bundle::ExportFormat::flac)
    bundle::check_audio_combination(bundle::AudioContainer::flac, options.encoding);
  const bundle::BundleReader reader(args.bundle);
  const bundle::ExportReport report = bundle::export_bundle(reader, options);
  fmt::print("export: {} files for {} records in {}\n", report.files.size(), report.records, args.out);
  if (report.clipped_samples > 0)
    fmt::print(stderr, "warning: {} samples in {} files were at or beyond full scale and were clipped\n",
               report.clipped_samples, report.clipped_files);
  return kExitOk;
}

}  // namespace

Command add_export(CLI::App& root) {
  CLI::App* app = root.add_subcommand(
      "export", "Write a bundle's audio (one file per record and site) or its ground truth as CSV");
  auto args = std::make_shared<ExportArgs>();
  app->add_option("BUNDLE", args->bundle, "bundle file (HDF5)")->required();
  app->add_option("--format", args->format, "wav or flac (audio), csv (index, events, states, beats, artifacts)")
      ->required()
      ->check(CLI::IsMember({"wav", "flac", "csv"}));
  app->add_option("--out", args->out, "output folder (created if missing)")->required();
  app->add_option("--bits", args->bits, "audio samples: 16 or 24-bit PCM (full scale 1.0), or float (wav only)")
      ->check(CLI::IsMember({"16", "24", "float"}))
      ->capture_default_str();
  app->add_option("--records", args->records, "only these record ids (comma separated)")->delimiter(',');
  app->add_flag("--clean", args->clean, "audio from pcg_clean (noise-free) instead of the noisy pcg");
  app->add_flag("--force", args->force, "overwrite existing files in the output folder");
  return {app, [args] { return run_export(*args); }};
}

}  // namespace stethogen::cli
