// model.pt of a fine-tuning run: the classifier's weights (encoder + head), its
// architecture, the class list, and the band list and statistics inputs must be
// normalised with (a model archive of kind classifier). `assess` and `map` need
// nothing else.
#pragma once

#include <filesystem>
#include <string>
#include <vector>

#include "batches/chip_collection.hpp"
#include "models/classifier_model.hpp"

namespace tinct {

struct ClassifierArtifact {
  ClassifierSpec spec;
  std::vector<std::string> classes;
  BandNormalisation normalisation;
  int chip_size = 0;
};

void save_classifier(const std::filesystem::path& file, const ClassifierModel& model,
                     const ClassifierArtifact& artifact);
// Rebuilds the model from the file's description and loads its weights. Fails (usage)
// when `file` is missing or not a model.pt.
ClassifierModel load_classifier(const std::filesystem::path& file, ClassifierArtifact& artifact);

}  // namespace tinct
