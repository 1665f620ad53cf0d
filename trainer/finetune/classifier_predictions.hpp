// Applying a classifier to labelled chips and writing what an assessment needs:
// metrics.json, confusion.csv and predictions.csv (id, x, y, date, true,
// predicted, one probability column per class), all atomically.
#pragma once

#include <filesystem>
#include <string>
#include <vector>

#include "batches/chip_collection.hpp"
#include "finetune/classifier_model.hpp"

namespace tinct {

struct Predictions {
  std::vector<ChipRef> chips;
  std::vector<int> truth, predicted;
  std::vector<std::vector<double>> probabilities;  // (N, classes)
};

// In inference mode, batches of `batch`, no augmentation.
Predictions predict_chips(ClassifierModel& model, const ChipCollection& collection,
                          const std::vector<ChipRef>& chips, int batch);

double macro_f1_of(const Predictions& predictions, int classes);

// Writes the three files into `folder`; returns the macro F1.
double write_assessment(const std::filesystem::path& folder, const Predictions& predictions,
                        const ChipCollection& collection, const std::vector<std::string>& classes);

}  // namespace tinct
