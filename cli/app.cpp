#include <cstdio>
#include <exception>

#include <fmt/format.h>

#include "cli/command.hpp"
#include "core/error.hpp"
#include "core/version.hpp"

namespace stethogen::cli {

int run(int argc, const char* const* argv) {
  CLI::App root{"stethogen: synthetic phonocardiogram datasets with exact ground truth, "
                "and scoring of heart-sound detectors against them"};
  root.set_version_flag("--version", kGeneratorVersion);
  root.require_subcommand(1);
  root.fallthrough(false);

  // A verb is listed here once it does real work.
  std::vector<Command> commands = {
      add_check(root),
      add_score(root),
      add_split(root),
      add_detect(root),
      add_generate(root),
      add_merge(root),
      add_inspect(root),
      add_verify(root),
      add_export(root),
      add_validate(root),
      // verbs are appended here as they land
  };

  try {
    root.parse(argc, argv);
  } catch (const CLI::Success& e) {
    return root.exit(e);  // --help, --version
  } catch (const CLI::ParseError& e) {
    root.exit(e);
    return kExitUsage;
  }

  for (const Command& c : commands) {
    if (!c.app->parsed()) continue;
    try {
      return c.action();
    } catch (const InputError& e) {
      fmt::print(stderr, "error: {}\n", e.what());
      return kExitUsage;
    } catch (const RuntimeFailure& e) {
      fmt::print(stderr, "error: {}\n", e.what());
      return kExitRuntime;
    } catch (const std::exception& e) {
      fmt::print(stderr, "error: {}\n", e.what());
      return kExitRuntime;
    }
  }
  return kExitUsage;
}

}  // namespace stethogen::cli
