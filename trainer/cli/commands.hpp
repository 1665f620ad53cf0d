// The subcommand table's types. Each command lives in its own file: it declares
// its options on its CLI11 subcommand and returns the function to run once the
// command line has been parsed (so errors are caught in one place, in main).
#pragma once

#include <CLI/CLI.hpp>

#include <functional>
#include <limits>
#include <vector>

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

// The tool's description and global options, the same in both executables.
inline const char* const kToolDescription =
    "tinct: self-supervised band-to-colour pretraining and habitat mapping from multispectral imagery, on the CPU";
void add_global_options(CLI::App& app, GlobalOptions& global);

// survey, pair and label: they need no LibTorch, so `tinct` runs them in its own process
// (cli/front_main.cpp); the table of every command (cli/main.cpp) starts with them.
const std::vector<CommandEntry>& data_commands();

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
