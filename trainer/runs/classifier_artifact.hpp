// model.pt of a fine-tuning run: the classifier's weights (encoder + head), its
// architecture, the class list, and the band list and statistics inputs must be
// normalised with. `assess` and `map` need nothing else.
#pragma once

#include <filesystem>
#include <string>
#include <vector>

#include "batches/chip_collection.hpp"
#include "finetune/classifier_model.hpp"

namespace tinct {

struct ClassifierArtifact {
  ClassifierSpec spec;
  std::vector<std::string> classes;
  BandNormalisation normalisation;
  int chip_size = 0;
};

void save_classifier(const std::filesystem::path& file, const ClassifierModel& model,
                     const ClassifierArtifact& artifact);
// Rebuilds the model from the file's description and loads its weights.
ClassifierModel load_classifier(const std::filesystem::path& file, ClassifierArtifact& artifact);

}  // namespace tinct
