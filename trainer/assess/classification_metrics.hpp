// How good a habitat classifier is on a labelled set: confusion matrix, accuracy, per-class
// precision/recall/F1, averaged F1, Cohen's kappa and, from probabilities, ROC AUC, average
// precision and calibration error. Plain C++ (no LibTorch): the caller hands over class
// indices and probabilities. Every undefined case has a stated value (below); nothing is NaN.
// Confidence intervals and paired comparisons live elsewhere.
#pragma once

#include <cstdint>
#include <optional>
#include <string>
#include <vector>

#include "util/json_text.hpp"

namespace tinct {

// Undefined cases, as scikit-learn 1.2 with labels=range(K) and zero_division=0:
// - precision of a class never predicted is 0 and precision_defined is false;
// - recall of a class absent from truth is 0 and recall_defined is false;
// - F1 is 0 when precision + recall = 0;
// - balanced accuracy is the mean recall over the classes present in truth only
//   (sklearn's balanced_accuracy_score drops classes absent from truth);
// - macro F1 averages all K classes, absent or never predicted ones included (as 0);
// - weighted F1 weights by support; micro F1 equals accuracy (every sample is one class's
//   true or false positive);
// - kappa is 0 when chance agreement p_e = 1 (every truth and every prediction is one
//   class; sklearn returns NaN there);
// - roc_auc and average_precision need K = 2, probabilities and both classes in truth,
//   else nullopt; ece needs probabilities, else nullopt.
struct ClassMetrics {
  double precision = 0, recall = 0, f1 = 0;
  std::int64_t support = 0;  // samples of this class in truth
  bool precision_defined = false, recall_defined = false;
};

struct ClassificationMetrics {
  std::vector<std::vector<std::int64_t>> confusion;  // (K, K): rows true, columns predicted
  double accuracy = 0, balanced_accuracy = 0, macro_f1 = 0, weighted_f1 = 0, micro_f1 = 0,
         kappa = 0;
  std::vector<ClassMetrics> per_class;  // (K)
  std::optional<double> roc_auc, average_precision;  // binary only, positive class 1
  std::optional<double> ece;                         // top-label, 10 bins
  int classes = 0;
  std::int64_t count = 0;
};

// truth and predicted hold class indices 0..classes-1 (N each); probabilities is empty or
// (N, K) with rows summing to 1 (within 1e-5). Throws tinct::Error on malformed input or N = 0.
ClassificationMetrics classification_metrics(
    const std::vector<int>& truth, const std::vector<int>& predicted, int classes,
    const std::vector<std::vector<double>>& probabilities = {});

// Mann-Whitney: P(score of a positive > score of a negative), ties counting half; equals
// sklearn's roc_auc_score. truth is 0/1; nullopt unless both classes are present.
std::optional<double> roc_auc(const std::vector<int>& truth, const std::vector<double>& score);

// sklearn's average_precision_score: sum over distinct thresholds (descending) of
// (R_k - R_{k-1}) P_k, no interpolation. nullopt unless both classes are present.
std::optional<double> average_precision(const std::vector<int>& truth,
                                        const std::vector<double>& score);

// Expected calibration error over 10 equal-width bins ((m-1)/10, m/10], 0 in bin 1:
// sum over non-empty bins of n_m/N |acc_m - conf_m| (Guo et al. 2017, REFERENCES.md 3).
// Top-label: conf = max probability, prediction = its class (the first on ties, as numpy's
// argmax; a binary tie at 0.5 scores the same either way). probabilities is (N, K).
double expected_calibration_error(const std::vector<int>& truth,
                                  const std::vector<std::vector<double>>& probabilities);

// Binary only: bins over p = probabilities[i][1], |fraction of positives - mean p| per bin.
double positive_class_ece(const std::vector<int>& truth,
                          const std::vector<std::vector<double>>& probabilities);

// class_names has K entries. Undefined values are written as stated above with their
// *_defined flags; nullopt values are written as null.
Json metrics_json(const ClassificationMetrics& metrics,
                  const std::vector<std::string>& class_names);

// Header "true\predicted,name1,...", then one row per true class: name, K counts.
std::string confusion_csv(const ClassificationMetrics& metrics,
                          const std::vector<std::string>& class_names);

}  // namespace tinct
