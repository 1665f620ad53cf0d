// A random forest on pixel features (OpenCV's cv::ml::RTrees, Breiman 2001): each tree
// grown on a bootstrap sample of the training rows, trying a random subset of features
// at each node; balanced class weights (OpenCV's priors multiply each row's weight by its
// class's); seeded through OpenCV's RNG of the calling thread (cv::theRNG() is per thread),
// so forests on several threads at once stay reproducible.
#pragma once

#include <cstdint>
#include <vector>

#include "baselines/pixel_features.hpp"

namespace tinct {

// Defaults follow scikit-learn's RandomForestClassifier (grown out, min_samples_split 2,
// max_features "sqrt"), with twice its trees, so the vote fractions are smoother.
struct RandomForestSettings {
  int trees = 200;
  int max_depth = 25;          // OpenCV's largest; far deeper than a few hundred labels need
  int min_split = 2;           // a node with fewer training rows (bootstrap copies count) is a leaf
  int features_per_split = 0;  // 0: floor(sqrt(F)), as scikit-learn's "sqrt"
};

// Trains on `train` rows with class indices `labels` (0..classes-1) and returns, per
// `test` row, the share of trees voting for each class (N, classes); a class absent from
// training gets 0. Restores the thread's OpenCV RNG afterwards.
std::vector<std::vector<double>> random_forest_probabilities(const FeatureTable& train, const std::vector<int>& labels,
                                                             int classes, const FeatureTable& test,
                                                             const RandomForestSettings& settings, std::uint64_t seed);

}  // namespace tinct
