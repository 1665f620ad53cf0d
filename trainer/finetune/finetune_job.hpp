// The whole of `tinct finetune`: the label stores and their split, the classifier
// initialised from a pretrain run or from scratch, the epoch loop with early
// stopping on validation macro F1, and the assessment of the best model on the
// test fold (metrics.json, confusion.csv, predictions.csv, model.pt).
#pragma once

#include <string>

#include "finetune/finetune_config.hpp"

namespace tinct {

struct FinetuneOptions {
  bool force = false;
  std::string resolved_config;
};

struct FinetuneSummary {
  double test_macro_f1 = 0;
  int best_epoch = 0;
};

FinetuneSummary run_finetune(const FinetuneConfig& config, const FinetuneOptions& options);

}  // namespace tinct
