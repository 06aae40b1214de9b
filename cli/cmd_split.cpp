// `stethogen split BUNDLE --public PUBLIC.h5 --key KEY.h5 [--seed S] [--force]`: a challenge
// split (scoring/split.hpp).
#include <cstdio>
#include <memory>
#include <optional>
#include <string>

#include <fmt/format.h>
#include <openssl/rand.h>

#include "cli/command.hpp"
#include "core/error.hpp"
#include "scoring/split.hpp"

namespace stethogen::cli {
namespace {

struct SplitArgs {
  std::string bundle, public_path, key_path;
  std::optional<std::uint64_t> seed;
  bool force = false;
};

int run_split(const SplitArgs& a) {
  scoring::SplitOptions o{a.bundle, a.public_path, a.key_path, 0, a.force};
  if (a.seed) {
    o.seed = *a.seed;
  } else {
    // Without --seed the ids must not be reproducible by anyone else: draw the key at random.
    if (RAND_bytes(reinterpret_cast<unsigned char*>(&o.seed), sizeof o.seed) != 1)
      throw RuntimeFailure("cannot draw a random split seed; pass --seed");
  }
  scoring::SplitReport report = scoring::split_bundle(o);
  fmt::print("split: {} records -> public {} (signals only), key {} (truth and id map; split seed {})\n",
             report.records, a.public_path, a.key_path, o.seed);
  return kExitOk;
}

}  // namespace

Command add_split(CLI::App& root) {
  CLI::App* app = root.add_subcommand(
      "split", "Make a challenge: a public bundle of blinded signals under opaque ids, and a key with the truth");
  auto args = std::make_shared<SplitArgs>();
  app->add_option("BUNDLE", args->bundle, "full bundle to split")->required();
  app->add_option("--public", args->public_path, "public bundle to write (signals and acquisition metadata)")
      ->required();
  app->add_option("--key", args->key_path, "key bundle to write (truth under the opaque ids, id map)")->required();
  app->add_option("--seed", args->seed, "key of the opaque ids (default: random, printed; keep it secret)");
  app->add_flag("--force", args->force, "overwrite existing output files");
  return {app, [args] { return run_split(*args); }};
}

}  // namespace stethogen::cli
