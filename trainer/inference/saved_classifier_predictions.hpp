// A finished run's model.pt applied to chips of a label store: the model's input statistics
// are put on the collection first. Studies use it for the validation chips each run's
// probabilities are calibrated on.
#pragma once

#include <filesystem>
#include <string>
#include <vector>

#include "inference/classifier_predictions.hpp"

namespace tinct {

struct SavedClassifierPredictions {
  Predictions predictions;
  std::vector<std::string> classes;  // the model's
};

SavedClassifierPredictions predict_with_saved_classifier(const std::filesystem::path& model_pt,
                                                         ChipCollection& chips, const std::vector<ChipRef>& refs,
                                                         int batch);

}  // namespace tinct
