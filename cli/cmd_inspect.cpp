// `stethogen inspect BUNDLE [--record ID] [--json]`: the dataset summary, or one record in detail.
#include <cstdio>
#include <memory>
#include <string>

#include <fmt/format.h>

#include "bundle/inspect.hpp"
#include "bundle/reader.hpp"
#include "cli/command.hpp"

namespace stethogen::cli {
namespace {

// Names read from a file written by another program may be invalid UTF-8: JSON output replaces
// such bytes (U+FFFD) instead of failing with a serializer error.
std::string to_json_text(const nlohmann::json& j) {
  return j.dump(2, ' ', false, nlohmann::json::error_handler_t::replace) + "\n";
}

struct InspectArgs {
  std::string bundle;
  std::string record;
  bool json = false;
};

int run_inspect(const InspectArgs& args) {
  const bundle::BundleReader reader(args.bundle);
  if (!args.record.empty()) {
    const bundle::RecordDetail detail = bundle::describe_record(reader, args.record);
    fmt::print("{}", args.json ? to_json_text(bundle::record_json(detail)) : bundle::format_record(detail));
  } else {
    const bundle::DatasetSummary summary = bundle::summarize_dataset(reader);
    fmt::print("{}", args.json ? to_json_text(bundle::summary_json(summary)) : bundle::format_summary(summary));
  }
  return kExitOk;
}

}  // namespace

Command add_inspect(CLI::App& root) {
  CLI::App* app = root.add_subcommand(
      "inspect", "Summarise a bundle (populations, states, parameter ranges, SNR histogram, audio hours) "
                 "or show one record in detail");
  auto args = std::make_shared<InspectArgs>();
  app->add_option("BUNDLE", args->bundle, "bundle file (HDF5), see docs/bundle-format.md")->required();
  app->add_option("--record", args->record, "show this record (e.g. r000042) in detail");
  app->add_flag("--json", args->json, "print JSON for machines instead of text");
  return {app, [args] { return run_inspect(*args); }};
}

}  // namespace stethogen::cli
