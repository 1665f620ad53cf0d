// The settings of `tinct pretrain`, read from a YAML config (config: pretrain):
// which pair stores, the model, the loss, the optimiser and schedule, validation
// on held-out blocks, and checkpoints. Every key but stores and output has a default.
#pragma once

#include <cstdint>
#include <filesystem>
#include <string>
#include <vector>

#include "distributed/distributed_settings.hpp"
#include "models/model_spec.hpp"
#include "pretrain/colour_loss_settings.hpp"
#include "training/train_settings.hpp"
#include "util/config_node.hpp"

namespace tinct {

struct ValidationSettings {
  double fraction = 0.2;     // of the spatial blocks
  std::int64_t every = 100;  // steps; 0 = only at the end
  int chips = 256;           // at most this many validation chips per evaluation
  int previews = 8;          // chips shown in each preview PNG
};

struct CheckpointSettings {
  std::int64_t every = 200;
  int keep = 3;
};

struct PretrainConfig {
  std::vector<std::filesystem::path> stores;
  std::filesystem::path output;
  ModelSpec model;
  ColourLossSettings loss;
  // train: the shared keys, plus how long and how often to log.
  TrainSettings train;       // defaults: batch 32, lr 2e-3, weight_decay 1e-2, warmup 100, clip_norm 1
  std::int64_t steps = 0;    // train.steps; 0: from train.epochs
  double epochs = 10;        // train.epochs over the training chips, when steps is 0
  int log_every = 10;        // train.log_every: steps between metrics rows
  std::string precision = "auto";  // train.precision: fp32 | bf16 | auto (training/precision.hpp)
  ValidationSettings validation;
  CheckpointSettings checkpoints;
  DistributedSettings distributed;  // distributed: how the processes of a data-parallel job meet
};

// Reads the whole config; store manifests are opened to learn the band count.
PretrainConfig read_pretrain_config(const ConfigNode& root);

}  // namespace tinct
