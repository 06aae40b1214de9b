// How verbs plug into the command line: each verb file defines one add_<verb> function that
// declares its options on a CLI11 subcommand and returns the action to run after parsing.
#pragma once

#include <functional>
#include <vector>

#include <CLI/CLI.hpp>

namespace stethogen::cli {

// Exit codes of the contract.
inline constexpr int kExitOk = 0;
inline constexpr int kExitRuntime = 1;
inline constexpr int kExitUsage = 2;

using Action = std::function<int()>;

struct Command {
  CLI::App* app = nullptr;
  Action action;
};

// Runs the whole command line; returns the process exit code. Never throws.
int run(int argc, const char* const* argv);

// One per verb, listed in app.cpp.
Command add_check(CLI::App& root);
Command add_generate(CLI::App& root);
Command add_inspect(CLI::App& root);
Command add_export(CLI::App& root);
Command add_verify(CLI::App& root);
Command add_merge(CLI::App& root);
Command add_score(CLI::App& root);
Command add_split(CLI::App& root);
Command add_detect(CLI::App& root);
Command add_validate(CLI::App& root);

}  // namespace stethogen::cli
