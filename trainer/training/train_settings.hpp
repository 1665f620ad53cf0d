// The `train:` section both training commands share: batch, optimiser, learning-rate
// schedule, clipping, seed, augmentation and threads. Each command reads its own extra
// keys (pretrain: steps, epochs, log_every; finetune: epochs, patience) from the same
// section and keeps its own defaults. No LibTorch here: the CLI reads configs cheaply.
#pragma once

#include <cstdint>
#include <string>

namespace tinct {

class ConfigNode;

struct TrainSettings {
  int batch = 32;                   // chips per step (the global batch over all processes)
  std::string optimizer = "adamw";  // adamw | sgd
  double lr = 2e-3;                 // the base rate, reached at the end of warm-up
  double min_lr = 0;                // the cosine decay ends here; min_lr = lr keeps the rate constant
  double weight_decay = 1e-2;
  double momentum = 0.9;            // sgd only
  std::int64_t warmup = 100;        // steps of linear warm-up
  double clip_norm = 1.0;           // gradient norm limit; 0 = off
  std::uint64_t seed = 0;
  bool augment = true;              // flips and quarter turns of training chips
  int threads = 0;                  // 0: --threads, else all cores
};

// Reads the shared keys of `node` (the train section) over `defaults`; fails (usage) when
// min_lr exceeds lr. Does not call node.finish(): the command reads its own keys first.
TrainSettings read_train_settings(const ConfigNode& node, const TrainSettings& defaults);

}  // namespace tinct
