#include "baselines/baseline_arm.hpp"

#include <algorithm>

#include "util/error.hpp"

namespace tinct {
namespace {

std::vector<int> classes_of(const ChipCollection& chips, const std::vector<ChipRef>& refs) {
  std::vector<int> labels;
  for (const ChipRef& ref : refs) labels.push_back(chips.class_of(ref));
  return labels;
}

void check_inputs(const ChipCollection& chips, const std::vector<ChipRef>& train, const std::vector<ChipRef>& test,
                  BaselineKind kind) {
  const std::string arm = "baseline " + to_string(kind);
  if (chips.classes().empty()) fail_usage(arm + ": the stores hold no labels; give label stores (tinct label)");
  if (train.empty()) fail_usage(arm + ": no training chips; raise the label budget or check the split");
  if (test.empty()) fail_usage(arm + ": no test chips; check the split");
}

}  // namespace

BaselineKind baseline_kind_from_name(const std::string& name, const std::string& where) {
  if (name == "random_forest") return BaselineKind::random_forest;
  if (name == "logistic_regression") return BaselineKind::logistic_regression;
  fail_usage(where + ": unknown baseline \"" + name + "\"; use random_forest or logistic_regression");
}

std::string to_string(BaselineKind kind) {
  return kind == BaselineKind::random_forest ? "random_forest" : "logistic_regression";
}

BaselinePredictions run_baseline(const ChipCollection& chips, const std::vector<ChipRef>& train,
                                 const std::vector<ChipRef>& test, const BaselineSettings& settings) {
  check_inputs(chips, train, test, settings.kind);
  const int classes = static_cast<int>(chips.classes().size());
  const FeatureTable train_features = pixel_features(chips, train, settings.features);
  const FeatureTable test_features = pixel_features(chips, test, settings.features);
  const std::vector<int> labels = classes_of(chips, train);

  BaselinePredictions result;
  result.chips = test;
  result.truth = classes_of(chips, test);
  result.probabilities =
      settings.kind == BaselineKind::random_forest
          ? random_forest_probabilities(train_features, labels, classes, test_features, settings.forest, settings.seed)
          : logistic_regression_probabilities(train_features, labels, classes, test_features, settings.logistic,
                                              settings.seed);
  for (const auto& row : result.probabilities) {
    result.predicted.push_back(static_cast<int>(std::max_element(row.begin(), row.end()) - row.begin()));
  }
  return result;
}

}  // namespace tinct
