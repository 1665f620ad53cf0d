#include "cli/commands.hpp"

namespace tinct {

void add_global_options(CLI::App& app, GlobalOptions& global) {
  app.add_option("--threads", global.threads, "Compute threads, up to 1024 as train.threads (default: all cores)")
      ->check(CLI::Range(0, 1024));
  app.add_flag("--quiet,-q", global.quiet, "Only warnings and errors on stderr");
}

const std::vector<CommandEntry>& data_commands() {
  static const std::vector<CommandEntry> commands{
      {"survey", "Describe rasters: grid, CRS and exact per-band statistics", setup_survey},
      {"pair", "Pair unlabelled band stacks with co-registered colour into a store of chips", setup_pair},
      {"label", "Cut chips around field labels (points, polygons or a label raster) into a label store",
       setup_label},
  };
  return commands;
}

}  // namespace tinct
