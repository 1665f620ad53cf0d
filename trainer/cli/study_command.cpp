// tinct study CONFIG: arms x label budgets x seeds x folds of fine-tunes and pixel
// baselines on paired splits, with statistics, summary files and report.html.
#include "cli/commands.hpp"
#include "runs/torch_runtime.hpp"
#include "study/study_job.hpp"

namespace tinct {

struct StudyCommandOptions {
  std::string config;
  bool force = false;
};

CommandRun setup_study(CLI::App& command, const GlobalOptions&) {
  auto options = std::make_shared<StudyCommandOptions>();
  command.add_option("config", options->config, "Study config (YAML, config: study)")->required();
  command.add_flag("--force", options->force, "Run every run again, even those finished with the same config");
  // --threads (global) is the total, divided among the fine-tunes that run at once.
  return [options] { run_study(options->config, {options->force, threads_in_use()}); };
}

}  // namespace tinct
