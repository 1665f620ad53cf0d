// The subcommand table's types. Each command lives in its own file: it declares
// its options on its CLI11 subcommand and returns the function to run once the
// command line has been parsed (so errors are caught in one place, in main).
#pragma once

#include <CLI/CLI.hpp>

#include <functional>
#include <limits>
#include <optional>
#include <utility>
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

// The tool's description, the same in both executables.
inline const char* const kToolDescription =
    "tinct: self-supervised band-to-colour pretraining and habitat mapping from multispectral imagery, on the CPU";

// survey, pair and label: they need no LibTorch, so `tinct` runs them in its own process
// (cli/front_main.cpp); the table of every command (cli/main.cpp) starts with them.
const std::vector<CommandEntry>& data_commands();

// The subcommands of a parsed command line, each with what it runs.
using CommandTable = std::vector<std::pair<CLI::App*, CommandRun>>;

// Puts the global options (--threads, --quiet; also accepted after the command) and
// `entries` as subcommands, one of them required, on `app`.
CommandTable add_commands(CLI::App& app, const std::vector<CommandEntry>& entries, GlobalOptions& global);

// Parses the command line; the exit code when it ends there (help or version shown: 0, a
// usage error: 2), nothing when the command is to run.
std::optional<int> parse_or_exit(CLI::App& app, int argc, char** argv);

// Runs the command the command line named.
void run_parsed(const CommandTable& commands);

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
