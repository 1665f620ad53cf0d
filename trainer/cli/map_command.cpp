// tinct map CONFIG | tinct map RUN RASTER --out DIR | tinct map STUDY RASTER --arm ARM --out DIR:
// a finetune run, or a study arm's seeds as an ensemble, over whole scenes.
#include "cli/commands.hpp"
#include "mapping/map_job.hpp"
#include "mapping/map_settings.hpp"
#include "util/config_node.hpp"
#include "util/error.hpp"

namespace tinct {

struct MapOptions {
  std::vector<std::string> inputs;
  std::string out;
  std::string points;
  std::string mode;
  std::string arm, budget;
  int fold = -1;
  int stride = 0;
  bool force = false;
};

static MapSettings settings_from(const MapOptions& options) {
  if (options.inputs.size() == 2) {
    if (options.out.empty()) fail_usage("tinct map RUN RASTER needs --out DIR (the folder to write)");
    std::optional<StudyArmChoice> arm;
    if (!options.arm.empty()) {
      arm = StudyArmChoice{options.inputs[0], options.arm, {}, {}};
      if (!options.budget.empty()) arm->budget = options.budget;
      if (options.fold >= 0) arm->fold = options.fold;
    } else if (!options.budget.empty() || options.fold >= 0) {
      fail_usage("--budget and --fold choose a study arm's runs: give --arm ARM too (the first input is then the "
                 "study folder)");
    }
    return map_settings_for_raster(options.inputs[0], options.inputs[1], options.out, arm);
  }
  if (!options.arm.empty() || !options.budget.empty() || options.fold >= 0) {
    fail_usage("--arm, --budget and --fold belong to the short form (tinct map STUDY RASTER --arm ARM); in a map "
               "config write study:, arm:, budget: and fold:");
  }
  const ConfigNode root = ConfigNode::load(options.inputs[0]);
  root.choice("config", {"map"});
  MapSettings settings = read_map_config(root);
  root.finish();
  if (!options.out.empty()) settings.output = options.out;
  return settings;
}

static void run_map_command(const MapOptions& options, const GlobalOptions& global) {
  MapSettings settings = settings_from(options);
  if (options.stride > 0) settings.stride = options.stride;
  if (!options.mode.empty()) settings.mode = options.mode == "dense" ? MapMode::dense : MapMode::exact;
  if (settings.mode == MapMode::dense && settings.stride % settings.inputs.feature_stride != 0) {
    fail_usage("dense mode needs a stride that is a multiple of the encoder's feature stride (" +
               std::to_string(settings.inputs.feature_stride) + " px); the stride is " +
               std::to_string(settings.stride) + ": use --mode exact or another --stride");
  }
  if (settings.mode == MapMode::dense) {
    const std::string refusal = dense_refusal(settings.inputs);
    if (!refusal.empty()) fail_usage("--mode dense: " + refusal);
  }
  MapJobOptions job;
  job.replace = options.force;
  job.threads = global.threads;
  job.points = options.points;
  run_map(settings, job);
}

CommandRun setup_map(CLI::App& command, const GlobalOptions& global) {
  auto options = std::make_shared<MapOptions>();
  command.add_option("inputs", options->inputs,
                     "A map config (YAML, config: map), or a finetune run folder (a study folder with --arm) and a "
                     "raster whose bands are the run's inputs in order")
      ->required()
      ->expected(1, 2);
  command.add_option("--out", options->out, "Folder to write (default: the config's output)");
  command.add_option("--points", options->points,
                     "Predict at these points instead (CSV with x,y or lon,lat, or any OGR point layer)");
  command.add_option("--mode", options->mode, "exact (each window alone) or dense (encoder over tiles)")
      ->check(CLI::IsMember({"exact", "dense"}));
  command.add_option("--arm", options->arm,
                     "Short form: the first input is a study folder; map this arm's seeds as an ensemble (largest "
                     "budget, lowest fold unless --budget, --fold)");
  command.add_option("--budget", options->budget, "With --arm: the budget's folder name (all, 15, ...)");
  command.add_option("--fold", options->fold, "With --arm: the fold")->check(CLI::NonNegativeNumber);
  command.add_option("--stride", options->stride, "Pixels between window centres")->check(kCountRange);
  command.add_flag("--force", options->force, "Replace an existing output folder");
  return [options, &global] { run_map_command(*options, global); };
}

}  // namespace tinct
