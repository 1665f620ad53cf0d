// The subcommand table's types. Each command lives in its own file: it declares
// its options on its CLI11 subcommand and returns the function to run once the
// command line has been parsed (so errors are caught in one place, in main).
#pragma once

#include <CLI/CLI.hpp>

#include <functional>
#include <limits>

namespace tinct {

struct GlobalOptions {
  int threads = 0;  // 0 = all cores
  bool quiet = false;
};

// For counts on the command line (--stop-after, --world, --stride): CLI11's PositiveNumber
// would print its bound as a 309-digit number.
inline const CLI::Range kCountRange(1, std::numeric_limits<int>::max());

using CommandRun = std::function<void()>;
using CommandSetup = CommandRun (*)(CLI::App& command, const GlobalOptions& global);

struct CommandEntry {
  const char* name;
  const char* summary;
  CommandSetup setup;
};

CommandRun setup_survey(CLI::App& command, const GlobalOptions& global);
CommandRun setup_check(CLI::App& command, const GlobalOptions& global);
CommandRun setup_pair(CLI::App& command, const GlobalOptions& global);
CommandRun setup_label(CLI::App& command, const GlobalOptions& global);
CommandRun setup_pretrain(CLI::App& command, const GlobalOptions& global);
CommandRun setup_export(CLI::App& command, const GlobalOptions& global);
CommandRun setup_finetune(CLI::App& command, const GlobalOptions& global);
CommandRun setup_assess(CLI::App& command, const GlobalOptions& global);
CommandRun setup_study(CLI::App& command, const GlobalOptions& global);
CommandRun setup_map(CLI::App& command, const GlobalOptions& global);

}  // namespace tinct
