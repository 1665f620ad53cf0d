#include "inference/assess_job.hpp"

#include "batches/chip_collection.hpp"
#include "inference/classifier_predictions.hpp"
#include "runs/classifier_artifact.hpp"
#include "util/error.hpp"
#include "util/log.hpp"

namespace fs = std::filesystem;

namespace tinct {

double run_assess(const fs::path& run, const fs::path& store, const fs::path& out) {
  ClassifierArtifact artifact;
  ClassifierModel model = load_classifier(run / "model.pt", artifact);
  ChipCollection chips({store});
  if (chips.classes() != artifact.classes) {
    fail_usage(store.string() + ": its classes differ from the model's; assess on a store made with the same "
               "labels.classes");
  }
  chips.use_normalisation(artifact.normalisation);
  const fs::path folder = out.empty() ? run / ("assess-" + store.filename().string()) : out;
  const double f1 =
      write_assessment(folder, predict_chips(model, chips, chips.all(), 32), chips, artifact.classes).macro_f1;
  log::info("assess: macro F1 " + std::to_string(f1) + " on " + std::to_string(chips.size()) + " chips; files in " +
            folder.string());
  return f1;
}

}  // namespace tinct
