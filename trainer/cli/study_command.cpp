// tinct study CONFIG: arms x label budgets x seeds x folds of fine-tunes and pixel
// baselines on paired splits, with statistics, summary files and report.html.
#include "cli/commands.hpp"
#include "study/study_job.hpp"
#include "training/parallel_launch.hpp"

namespace tinct {

struct StudyCommandOptions {
  std::string config;
  bool force = false;
  int world = 0;
};

CommandRun setup_study(CLI::App& command, const GlobalOptions& global) {
  auto options = std::make_shared<StudyCommandOptions>();
  command.add_option("config", options->config, "Study config (YAML, config: study)")->required();
  command.add_flag("--force", options->force, "Run every run again, even those finished with the same config");
  command.add_option("--world", options->world,
                     "Share the fine-tunes among this many processes on this machine; under srun or with "
                     "RANK/WORLD_SIZE/MASTER_ADDR set, each process joins without it")
      ->check(CLI::PositiveNumber);
  // --threads (global) is the total, divided among the ranks on this machine and then among
  // the fine-tunes that run at once.
  return [options, &global] {
    if (run_as_local_ranks(options->world)) return;
    run_study(options->config, {options->force, global.threads, options->world});
  };
}

}  // namespace tinct
