// The settings of `tinct finetune`, read from YAML (config: finetune): the label
// stores, the initialisation (a pretrain run, or scratch with the same
// architecture), the head, the freeze policy, class weights, label budget, the
// split and the training schedule with early stopping.
#pragma once

#include <cstdint>
#include <filesystem>
#include <string>
#include <vector>

#include "finetune/default_head.hpp"
#include "finetune/label_budget.hpp"
#include "finetune/label_split.hpp"
#include "distributed/distributed_settings.hpp"
#include "models/head_spec.hpp"
#include "models/model_spec.hpp"
#include "training/train_settings.hpp"
#include "util/config_node.hpp"

namespace tinct {

enum class FreezePolicy { frozen, full, unfreeze_after };

struct FinetuneInit {
  bool pretrained = true;                  // false: scratch
  std::filesystem::path pretrain_run;      // pretrained, or scratch "like" a run (same architecture, statistics)
  ModelSpec model;                         // scratch without a run
};

struct FinetuneConfig {
  std::vector<std::filesystem::path> stores;
  std::filesystem::path output;
  FinetuneInit init;
  double dropout = 0.2;
  int hidden = 0;
  HeadSpec head;  // head: pool, kind, k, l2, colour_channels (models/head_spec.hpp)
  HeadChoice head_choice;  // whether `head` is the built-in default, and why (finetune/default_head.hpp)
  FreezePolicy freeze = FreezePolicy::full;
  int unfreeze_epoch = 5;
  double encoder_lr_scale = 1.0;
  std::string class_weights = "balanced";  // balanced | none | explicit
  std::vector<double> explicit_weights;
  LabelBudget budget;
  SplitSettings split;
  // train: the shared keys (finetune_train_defaults()), plus epochs and early stopping.
  TrainSettings train;
  int epochs = 50;    // at most
  int patience = 10;  // epochs without a better validation macro F1 before stopping
  DistributedSettings distributed;  // distributed: how the processes of a data-parallel job meet
};

// Fine-tuning's own defaults for the shared train keys: batch 16, lr 1e-3, weight_decay
// 1e-4, no warm-up, a cosine decay to 0 over all epochs' steps, clip_norm 5.
TrainSettings finetune_train_defaults();

FinetuneConfig read_finetune_config(const ConfigNode& root);

}  // namespace tinct
