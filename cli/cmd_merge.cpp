// `stethogen merge SHARD... -o OUT.h5`: joins shard bundles of one recipe into the bundle a single
// run would have written (bundle/merge.hpp).
#include <memory>
#include <string>
#include <vector>

#include <fmt/format.h>

#include "bundle/merge.hpp"
#include "cli/command.hpp"

namespace stethogen::cli {

Command add_merge(CLI::App& root) {
  CLI::App* app = root.add_subcommand(
      "merge", "Join shard bundles of one recipe into one bundle, in record order; refuses shards of different "
               "recipes and missing or duplicate records");
  struct Args {
    std::vector<std::string> shards;
    std::string output;
    bool force = false;
  };
  auto a = std::make_shared<Args>();
  app->add_option("SHARD", a->shards, "shard bundles (any order)")->required();
  app->add_option("-o,--output", a->output, "merged bundle")->required();
  app->add_flag("--force", a->force, "replace an existing output");
  return {app, [a] {
            std::vector<std::filesystem::path> inputs(a->shards.begin(), a->shards.end());
            bundle::MergeSpec spec;
            spec.overwrite = a->force;
            bundle::merge_bundles(inputs, a->output, spec);
            fmt::print(stderr, "merge: wrote {} from {} shard(s)\n", a->output, inputs.size());
            return kExitOk;
          }};
}

}  // namespace stethogen::cli
