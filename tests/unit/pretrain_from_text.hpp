// Runs pretraining in this process from a config given as text, paths relative to
// `folder`, as `tinct pretrain` reads a config file.
#pragma once

#include <string>

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

}  // namespace tinct::testing
