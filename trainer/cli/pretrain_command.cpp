// tinct pretrain CONFIG: self-supervised band-to-colour pretraining into a run folder.
#include "cli/commands.hpp"
#include "pretrain/pretrain_config.hpp"
#include "pretrain/pretrain_job.hpp"
#include "training/parallel_launch.hpp"
#include "runs/torch_runtime.hpp"
#include "util/config_node.hpp"

namespace tinct {

struct PretrainCommandOptions {
  std::string config;
  bool resume = false;
  bool force = false;
  int world = 0;  // --world: local processes of one data-parallel job
  std::int64_t stop_after = 0;
};

static void run_pretrain_command(const PretrainCommandOptions& options, const GlobalOptions& global) {
  const ConfigNode root = ConfigNode::load(options.config);
  root.choice("config", {"pretrain"});
  const PretrainConfig config = read_pretrain_config(root);
  root.finish();
  if (run_as_local_ranks(options.world)) return;
  const auto parallel =
      join_data_parallel(config.distributed, options.world, global.threads > 0 ? global.threads : config.train.threads);
  if (!parallel && global.threads == 0 && config.train.threads > 0) configure_threads(config.train.threads);
  PretrainOptions job;
  job.resume = options.resume;
  job.force = options.force;
  job.stop_after = options.stop_after;
  job.resolved_config = resolved_text(root);
  job.parallel = parallel.get();
  run_pretrain(config, job);
}

CommandRun setup_pretrain(CLI::App& command, const GlobalOptions& global) {
  auto options = std::make_shared<PretrainCommandOptions>();
  command.add_option("config", options->config, "Pretrain config (YAML, config: pretrain)")->required();
  CLI::Option* resume = command.add_flag("--resume", options->resume, "Continue the run from its last checkpoint");
  CLI::Option* force = command.add_flag("--force", options->force, "Start the run over; the old run stays until the new one ends");
  resume->excludes(force);
  command.add_option("--stop-after", options->stop_after,
                     "Stop after this many steps in all (with a checkpoint), e.g. to fit a time slot; "
                     "--resume continues")
      ->check(kCountRange);
  command.add_option("--world", options->world,
                     "Run as this many processes of one data-parallel job on this machine (loopback); "
                     "train.batch stays the global batch. Under srun or with RANK/WORLD_SIZE/MASTER_ADDR set, "
                     "each process joins the job without it")
      ->check(kCountRange);
  return [options, &global] { run_pretrain_command(*options, global); };
}

}  // namespace tinct
