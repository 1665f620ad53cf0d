// Runs pretraining and fine-tuning in this process from configs given as text, paths
// relative to `folder`, as `tinct pretrain` and `tinct finetune` read a config file.
#pragma once

#include <string>

#include "finetune/finetune_config.hpp"
#include "finetune/finetune_job.hpp"
#include "pretrain/pretrain_config.hpp"
#include "pretrain/pretrain_job.hpp"
#include "temp_folder.hpp"
#include "util/config_node.hpp"

namespace tinct::testing {

inline void run_pretrain_yaml(const TempFolder& folder, const std::string& yaml) {
  const auto root = ConfigNode::from_text(yaml, "pretrain.yaml", folder.path());
  root.choice("config", {"pretrain"});
  const PretrainConfig config = read_pretrain_config(root);
  root.finish();
  PretrainOptions options;
  options.resolved_config = resolved_text(root);
  run_pretrain(config, options);
}

struct FinetuneFromText {
  FinetuneConfig config;
  std::string resolved;  // the config with every default filled in, as tinct check prints it
};

inline FinetuneFromText read_finetune_yaml(const TempFolder& folder, const std::string& yaml) {
  const auto root = ConfigNode::from_text(yaml, "finetune.yaml", folder.path());
  root.choice("config", {"finetune"});
  FinetuneFromText read{read_finetune_config(root), ""};
  root.finish();
  read.resolved = resolved_text(root);
  return read;
}

inline FinetuneResult run_finetune_yaml(const TempFolder& folder, const std::string& yaml) {
  const FinetuneFromText read = read_finetune_yaml(folder, yaml);
  FinetuneOptions options;
  options.resolved_config = read.resolved;
  return run_finetune(read.config, options);
}

}  // namespace tinct::testing
