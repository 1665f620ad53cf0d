// One pixel-baseline arm of a study: features of the labelled pixels (pixel_features.hpp),
// a random forest or a logistic regression trained on the training chips, predictions for
// the test chips. The study passes the same chip lists (split, budget) as its deep arms and
// scores the result with the metrics module (assess/classification_metrics.hpp) like any arm.
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "baselines/logistic_regression.hpp"
#include "baselines/pixel_features.hpp"
#include "baselines/random_forest.hpp"
#include "batches/chip_collection.hpp"

namespace tinct {

enum class BaselineKind { random_forest, logistic_regression };

// Names in configs and reports: "random_forest", "logistic_regression".
BaselineKind baseline_kind_from_name(const std::string& name, const std::string& where);
std::string to_string(BaselineKind kind);

struct BaselineSettings {
  BaselineKind kind = BaselineKind::random_forest;
  FeatureSet features = FeatureSet::pixel_and_3x3;
  std::uint64_t seed = 0;  // the forest's draws; the logistic regression's balancing rows
  RandomForestSettings forest;
  LogisticSettings logistic;
};

// As a deep arm's predictions: per test chip, in the order given, its true class, the
// predicted class (the most probable; the lowest index on ties) and the class probabilities.
struct BaselinePredictions {
  std::vector<ChipRef> chips;
  std::vector<int> truth, predicted;
  std::vector<std::vector<double>> probabilities;  // (N, classes)
};

// Fails (usage) when `chips` is not a label store, `train` or `test` is empty, or a logistic
// regression's training chips hold a single class; (runtime) when a chip's label pixel is
// invalid. The same inputs and seed give the same predictions.
BaselinePredictions run_baseline(const ChipCollection& chips, const std::vector<ChipRef>& train,
                                 const std::vector<ChipRef>& test, const BaselineSettings& settings);

}  // namespace tinct
