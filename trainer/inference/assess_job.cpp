#include "inference/assess_job.hpp"

#include "batches/chip_collection.hpp"
#include "inference/classifier_predictions.hpp"
#include "inference/split_table.hpp"
#include "runs/classifier_artifact.hpp"
#include "util/error.hpp"
#include "util/log.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

// The store's chips split into those the run never saw in training or validation (its
// test chips, or chips from elsewhere) and those it did (or left unused beside them).
struct ChipsByUse {
  std::vector<ChipRef> unseen, learnt;
};

ChipsByUse sort_by_use(const fs::path& run, const ChipCollection& chips) {
  ChipsByUse use;
  const fs::path split_file = run / "split.csv";
  if (!fs::exists(split_file)) {
    log::warning("assess: " + run.string() + " holds no split.csv (the run predates it), so its training chips "
                 "cannot be told apart: if the store holds them, the scores are optimistic");
    use.unseen = chips.all();
    return use;
  }
  const auto roles = roles_by_identity(read_split_table(split_file));
  for (const ChipRef& ref : chips.all()) {
    const ChipRecord r = chips.store(ref.store).record(ref.chip);
    const auto found = roles.find(chip_identity(r.scene, r.source_id, r.x, r.y));
    (found == roles.end() || found->second == "test" ? use.unseen : use.learnt).push_back(ref);
  }
  return use;
}

std::vector<ChipRef> chips_to_score(const fs::path& run, const fs::path& store, const ChipCollection& chips,
                                    bool all) {
  const ChipsByUse use = sort_by_use(run, chips);
  const std::string learnt = std::to_string(use.learnt.size());
  if (all) {
    if (!use.learnt.empty()) {
      log::warning("assess --all: " + learnt + " of the " + std::to_string(chips.size()) + " chips scored are the " +
                   "run's own training, validation or unused chips (see its split.csv): the model learnt from them " +
                   "or their neighbours, so these scores are OPTIMISTIC and do not measure how it does on new ground");
    }
    return chips.all();
  }
  if (use.unseen.empty()) {
    fail_usage(store.string() + ": all " + learnt + " chips are ones the run trained or validated on (or left " +
               "unused beside them); assess on other labels, or add --all to score them knowing the scores are " +
               "optimistic");
  }
  if (!use.learnt.empty()) {
    log::info("assess: scoring the " + std::to_string(use.unseen.size()) + " chips the run never learnt from; " +
              learnt + " training, validation or unused chips of the run left out (--all scores them too)");
  }
  return use.unseen;
}

}  // namespace

double run_assess(const fs::path& run, const fs::path& store, const fs::path& out, bool all) {
  ClassifierArtifact artifact;
  ClassifierModel model = load_classifier(run / "model.pt", artifact);
  ChipCollection chips({store});
  if (chips.classes() != artifact.classes) {
    fail_usage(store.string() + ": its classes differ from the model's; assess on a store made with the same "
               "labels.classes");
  }
  chips.use_normalisation(artifact.normalisation);
  const std::vector<ChipRef> scored = chips_to_score(run, store, chips, all);
  const fs::path folder = out.empty() ? run / ("assess-" + store.filename().string()) : out;
  const double f1 = write_assessment(folder, predict_chips(model, chips, scored, 32), chips, artifact.classes).macro_f1;
  log::info("assess: macro F1 " + std::to_string(f1) + " on " + std::to_string(scored.size()) + " chips; files in " +
            folder.string());
  return f1;
}

}  // namespace tinct
