#include "inference/saved_classifier_predictions.hpp"

#include "runs/classifier_artifact.hpp"
#include "util/error.hpp"

namespace tinct {

SavedClassifierPredictions predict_with_saved_classifier(const std::filesystem::path& model_pt,
                                                         ChipCollection& chips, const std::vector<ChipRef>& refs,
                                                         int batch) {
  ClassifierArtifact artifact;
  ClassifierModel model = load_classifier(model_pt, artifact);
  if (artifact.classes != chips.classes()) {
    fail_usage(model_pt.string() + ": the model's classes differ from the label store's; use the store it was "
               "trained on");
  }
  chips.use_normalisation(artifact.normalisation);
  return {predict_chips(model, chips, refs, batch), artifact.classes};
}

}  // namespace tinct
