// tinct finetune CONFIG: a classification head (and optionally the encoder) on a label store.
#include "cli/commands.hpp"
#include "finetune/finetune_config.hpp"
#include "finetune/finetune_job.hpp"
#include "runs/torch_runtime.hpp"
#include "util/config_node.hpp"

namespace tinct {

struct FinetuneCommandOptions {
  std::string config;
  bool force = false;
};

CommandRun setup_finetune(CLI::App& command, const GlobalOptions& global) {
  auto options = std::make_shared<FinetuneCommandOptions>();
  command.add_option("config", options->config, "Finetune config (YAML, config: finetune)")->required();
  command.add_flag("--force", options->force, "Replace a finished run of the same name");
  return [options, &global] {
    const ConfigNode root = ConfigNode::load(options->config);
    root.choice("config", {"finetune"});
    const FinetuneConfig config = read_finetune_config(root);
    root.finish();
    if (global.threads == 0 && config.threads > 0) configure_threads(config.threads);
    run_finetune(config, {options->force, resolved_text(root)});
  };
}

}  // namespace tinct
