// Applying a classifier to labelled chips: class probabilities per chip, and the files an
// assessment writes: metrics.json, confusion.csv and predictions.csv (id, x, y and the
// CRS they are in, lon, lat, date, true, predicted, one probability column per class), all
// atomically. Fine-tuning
// (validation, test), assess, and later studies and maps use it.
#pragma once

#include <filesystem>
#include <string>
#include <vector>

#include "assess/classification_metrics.hpp"
#include "batches/chip_collection.hpp"

namespace tinct {

class ClassifierModel;  // models/classifier_model.hpp: kept out, so torch-free code can hold Predictions

struct Predictions {
  std::vector<ChipRef> chips;
  std::vector<int> truth, predicted;
  std::vector<std::vector<double>> probabilities;  // (N, classes)
};

// In inference mode, batches of `batch`, no augmentation; the chips' inputs are normalised
// with the collection's statistics (the model's: ChipCollection::use_normalisation).
// Leaves the model in training mode, as it found it in the loops.
Predictions predict_chips(ClassifierModel& model, const ChipCollection& collection,
                          const std::vector<ChipRef>& chips, int batch);

// 0 when there are no predictions.
double macro_f1_of(const Predictions& predictions, int classes);

// Writes the three files into `folder`; returns the metrics written.
ClassificationMetrics write_assessment(const std::filesystem::path& folder, const Predictions& predictions,
                                       const ChipCollection& collection, const std::vector<std::string>& classes);

}  // namespace tinct
