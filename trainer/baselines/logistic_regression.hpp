// A logistic regression on pixel features (OpenCV's cv::ml::LogisticRegression): features
// standardised with the training rows' mean and sd, then one binary model per class against
// the rest (one-vs-rest, OpenCV's way for more than two classes), by full-batch gradient
// descent. Regularisation is OpenCV's L2 term at its fixed strength: each binary model
// minimises (1/m) sum_i logloss_i + (1/(2m)) |w|^2 over its m rows, intercept not penalised,
// which is scikit-learn's LogisticRegression(C=1, multi_class="ovr") on the same rows.
// Imbalanced classes: OpenCV takes no weights, so the rows are resampled to balance
// (class_balance.hpp), which weighs a row of class c by about n_max / n_c (scikit-learn:
// sample_weight n_max / n_c with C = 1; all 1 when every class has as many rows).
#pragma once

#include <cstdint>
#include <vector>

#include "baselines/pixel_features.hpp"

namespace tinct {

struct LogisticSettings {
  // Gradient steps per binary model; each step is 1/L, L the largest curvature of the
  // loss on these rows, so the loss falls at every step.
  int iterations = 2000;
};

// Trains on `train` rows with class indices `labels` (0..classes-1, at least two classes
// present) and returns per `test` row the class probabilities (N, classes): for two
// classes the model's sigmoid and its complement, for more each model's sigmoid divided by
// their sum (scikit-learn's one-vs-rest); a class absent from training gets 0. The seed
// draws the balancing rows.
std::vector<std::vector<double>> logistic_regression_probabilities(const FeatureTable& train,
                                                                   const std::vector<int>& labels, int classes,
                                                                   const FeatureTable& test,
                                                                   const LogisticSettings& settings,
                                                                   std::uint64_t seed);

}  // namespace tinct
