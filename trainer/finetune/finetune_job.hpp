// The whole of `tinct finetune`, and the function studies call once per arm, seed, budget
// and fold: the label stores and their split, the classifier initialised from a pretrain
// run or from scratch, the epoch loop (shared schedule, clipping and non-finite guard)
// with early stopping on validation macro F1 and a checkpoint per epoch, and the
// assessment of the best model on the test fold (metrics.json, confusion.csv,
// predictions.csv, model.pt).
#pragma once

#include <cstdint>
#include <string>

#include "assess/classification_metrics.hpp"
#include "finetune/finetune_config.hpp"
#include "inference/classifier_predictions.hpp"
#include "runs/run_folder.hpp"

namespace tinct {

class DataParallel;

struct FinetuneOptions {
  bool force = false;
  bool resume = false;         // continue from the run's last checkpoint
  int stop_after = 0;          // stop (with a checkpoint) once this many epochs are done; 0 = run to the end
  std::string resolved_config;  // the config with every default, saved into the run
  DataParallel* parallel = nullptr;  // this process's data-parallel job; null: one process
};

struct FinetuneResult {
  RunStatus status = RunStatus::done;  // stopped (--stop-after): nothing below is filled in
  int best_epoch = 0;                  // 1-based; model.pt holds this epoch's weights
  int epochs_run = 0;
  double best_validation_macro_f1 = 0;
  Predictions test;               // the best model on the test fold, with class probabilities
  ClassificationMetrics metrics;  // of `test`, as written to metrics.json
  // Distinct labelled chips whose bands this process read before the test (training and
  // validation): at most budget.per_class x classes.
  std::int64_t labelled_chips_read = 0;
};

// Fails (runtime) when interrupted by SIGINT or SIGTERM, after writing a checkpoint.
FinetuneResult run_finetune(const FinetuneConfig& config, const FinetuneOptions& options);

}  // namespace tinct
