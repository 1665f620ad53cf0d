// What a map takes from the run's own training beyond its weights, recomputed from the
// run's label stores and its resolved config (same split, same label budget):
// - the area of applicability (assess/area_of_applicability): the pooled encoder features
//   of the training chips, unweighted (the head acts on raw, unstandardised features, and
//   with a hidden layer its weights say nothing per feature, so no honest weight exists),
//   with cross-validation folds from the run's split units dealt as the split deals them;
// - a temperature (temperature scaling) fitted on the run's validation chips.
#pragma once

#include <filesystem>
#include <optional>
#include <string>
#include <vector>

#include "assess/area_of_applicability.hpp"
#include "mapping/window_model.hpp"

namespace tinct {

struct TrainingChipFeatures {
  std::vector<double> x, y;     // chip centres, map units of the store
  std::vector<int> folds;
  std::vector<float> features;  // (N, F)
};

struct RunEvidence {
  std::optional<ApplicabilityModel> applicability;
  TrainingChipFeatures training;
  double temperature = 1;
  bool calibrated = false;
};

// threads: for the applicability fit (0 = all cores).
RunEvidence gather_run_evidence(const std::filesystem::path& run, WindowModel& model, bool with_applicability,
                                int batch, int threads);

// training_features.csv: x, y, fold, training_index, f0..f(F-1); and aoa.json (mean
// distance, quartiles, whisker, threshold, constant features), for checking the index
// against an independent computation.
void write_applicability_files(const std::filesystem::path& folder, const RunEvidence& evidence);

}  // namespace tinct
