// tinct assess RUN --on STORE: a finetune run's model applied to any label store,
// writing the same metric files as fine-tuning does.
#include "batches/chip_collection.hpp"
#include "cli/commands.hpp"
#include "finetune/classifier_predictions.hpp"
#include "runs/classifier_artifact.hpp"
#include "util/error.hpp"
#include "util/log.hpp"

namespace tinct {

struct AssessOptions {
  std::string run;
  std::string store;
  std::string out;
};

static void run_assess(const AssessOptions& options) {
  ClassifierArtifact artifact;
  ClassifierModel model = load_classifier(std::filesystem::path(options.run) / "model.pt", artifact);
  ChipCollection chips({options.store});
  if (chips.classes() != artifact.classes) {
    fail_usage(options.store + ": its classes differ from the model's; assess on a store made with the same "
               "labels.classes");
  }
  chips.use_normalisation(artifact.normalisation);
  const std::filesystem::path out = options.out.empty()
                                        ? std::filesystem::path(options.run) /
                                              ("assess-" + std::filesystem::path(options.store).filename().string())
                                        : std::filesystem::path(options.out);
  const double f1 = write_assessment(out, predict_chips(model, chips, chips.all(), 32), chips, artifact.classes);
  log::info("assess: macro F1 " + std::to_string(f1) + " on " + std::to_string(chips.size()) + " chips; files in " +
            out.string());
}

CommandRun setup_assess(CLI::App& command, const GlobalOptions&) {
  auto options = std::make_shared<AssessOptions>();
  command.add_option("run", options->run, "A finetune run folder (it holds model.pt)")->required();
  command.add_option("--on", options->store, "Label store to assess on")->required();
  command.add_option("--out", options->out, "Folder for the metric files (default: RUN/assess-STORE)");
  return [options] { run_assess(*options); };
}

}  // namespace tinct
