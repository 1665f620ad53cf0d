// Imbalanced training labels handled as the deep arms handle them (balanced class weights,
// trainer/finetune): weights for classifiers that take them, and a balanced resampling
// for those that do not (OpenCV's logistic regression).
#pragma once

#include <cstdint>
#include <vector>

namespace tinct {

// (K): n / (K * n_c) for a class with n_c of the n labels, 0 for a class without any
// (scikit-learn's "balanced" up to one factor, which only the ratios matter for).
std::vector<double> balanced_class_weights(const std::vector<int>& labels, int classes);

// Row indices into `labels` in which every class present appears as often as the largest
// one: each row of class c repeated floor(n_max / n_c) times, then the remainder drawn
// with the seed without replacement, so rows weigh about n_max / n_c each. Sorted.
std::vector<int> balanced_resample(const std::vector<int>& labels, int classes, std::uint64_t seed);

}  // namespace tinct
