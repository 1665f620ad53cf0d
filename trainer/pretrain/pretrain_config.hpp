// The settings of `tinct pretrain`, read from a YAML config (config: pretrain):
// which pair stores, the model, the loss, the optimiser and schedule, validation
// on held-out blocks, and checkpoints. Every key but stores and output has a default.
#pragma once

#include <cstdint>
#include <filesystem>
#include <string>
#include <vector>

#include "models/model_spec.hpp"
#include "pretrain/colour_loss_settings.hpp"
#include "util/config_node.hpp"

namespace tinct {

struct TrainSettings {
  std::int64_t steps = 0;   // 0: derived from epochs
  double epochs = 10;
  int batch = 32;
  std::string optimizer = "adamw";  // adamw | sgd
  double lr = 2e-3;
  double min_lr = 0;
  double weight_decay = 1e-2;
  double momentum = 0.9;     // sgd
  std::int64_t warmup = 100; // steps
  double clip_norm = 1.0;    // 0 = off
  std::uint64_t seed = 0;
  bool augment = true;
  int log_every = 10;
  int threads = 0;           // 0: --threads, else all cores
};

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
  TrainSettings train;
  ValidationSettings validation;
  CheckpointSettings checkpoints;
};

// Reads the whole config; store manifests are opened to learn the band count.
PretrainConfig read_pretrain_config(const ConfigNode& root);

}  // namespace tinct
