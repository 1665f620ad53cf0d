#include <utility>

#include "cli/commands.hpp"

namespace tinct {
namespace {

void add_global_options(CLI::App& app, GlobalOptions& global) {
  app.add_option("--threads", global.threads, "Compute threads, up to 1024 as train.threads (default: all cores)")
      ->check(CLI::Range(0, 1024));
  app.add_flag("--quiet,-q", global.quiet, "Only warnings and errors on stderr");
}

}  // namespace

const std::vector<CommandEntry>& data_commands() {
  static const std::vector<CommandEntry> commands{
      {"survey", "Describe rasters: grid, CRS and exact per-band statistics", setup_survey},
      {"pair", "Pair unlabelled band stacks with co-registered colour into a store of chips", setup_pair},
      {"label", "Cut chips around field labels (points, polygons or a label raster) into a label store",
       setup_label},
  };
  return commands;
}

CommandTable add_commands(CLI::App& app, const std::vector<CommandEntry>& entries, GlobalOptions& global) {
  app.require_subcommand(1);
  add_global_options(app, global);
  CommandTable commands;
  for (const auto& entry : entries) {
    CLI::App* command = app.add_subcommand(entry.name, entry.summary);
    command->fallthrough();  // global options (--threads, --quiet) also after the command
    commands.emplace_back(command, entry.setup(*command, global));
  }
  return commands;
}

std::optional<int> parse_or_exit(CLI::App& app, int argc, char** argv) {
  try {
    app.parse(argc, argv);
    return std::nullopt;
  } catch (const CLI::ParseError& error) {
    const int code = app.exit(error);  // prints help, version or the usage error
    return code == 0 ? 0 : 2;
  }
}

void run_parsed(const CommandTable& commands) {
  for (const auto& [command, run] : commands) {
    if (command->parsed()) run();
  }
}

}  // namespace tinct
