// The whole of `tinct pretrain`: opens the run (training/run_lifecycle), the stores and
// the split, builds the model and optimiser (or restores them with --resume), and runs
// the training loop with its validation, preview and checkpoint blocks.
#pragma once

#include <cstdint>
#include <string>

#include "pretrain/pretrain_config.hpp"

namespace tinct {

class DataParallel;

struct PretrainOptions {
  bool resume = false;
  bool force = false;
  std::int64_t stop_after = 0;  // stop (with a checkpoint) once this many steps are done; 0 = run to the end
  std::string resolved_config;  // the config with every default, saved into the run
  DataParallel* parallel = nullptr;  // this process's data-parallel job; null: one process
};

// Fails (runtime) when interrupted by SIGINT or SIGTERM, after writing a checkpoint.
void run_pretrain(const PretrainConfig& config, const PretrainOptions& options);

}  // namespace tinct
