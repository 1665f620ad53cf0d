// Area of applicability (Meyer and Pebesma 2021; REFERENCES.md section 10, from memory): how
// far a new feature vector lies from the data a model was trained on, relative to the typical
// spacing of that data, and whether that is further than cross-validation ever tested. Maps
// mark cells outside as places where the model has no business predicting.
#pragma once

#include <cstddef>
#include <vector>

#include "assess/distance_tiles.hpp"

namespace tinct {

// Definitions (distances Euclidean, in the standardised and weighted feature space):
// - standardise with the training mean and sample sd (n - 1), then multiply by the weight; a
//   feature constant over the training data is ignored (scale 0). Any common factor of the
//   scales (sd with n or n - 1, weights times a constant) cancels in every index below;
// - mean_distance (d_bar) = mean distance over all pairs i != j of training vectors;
// - training_index[i] = distance from i to the nearest training vector of another fold / d_bar;
// - q1, q3 = 25th and 75th percentiles of training_index by linear interpolation between order
//   statistics (numpy's default, R's type 7); whisker = q3 + 1.5 (q3 - q1); threshold = the
//   largest training_index not above the whisker. (R's boxplot whisker uses Tukey's hinges
//   instead, which differ slightly for small N: from memory.)
// - index of a new vector = distance to the nearest training vector (any fold) / d_bar; it is
//   inside the area of applicability when index <= threshold.
struct ApplicabilityModel {
  int features = 0;
  std::vector<double> mean, scale;  // (F): standardised = (x - mean) * scale
  int constant_features = 0;
  std::vector<int> folds;           // (N)
  double mean_distance = 0;         // d_bar
  std::vector<double> training_index;  // (N)
  double q1 = 0, q3 = 0, whisker = 0, threshold = 0;
  DistanceTiles training;           // the N standardised, weighted training vectors

  std::size_t count() const { return folds.size(); }
  bool inside(double index) const { return index <= threshold; }
};

// features is (N, F) row-major, N = folds.size() >= 2 with at least two distinct fold ids;
// weights is empty (all 1) or F values >= 0, not all 0. threads: 0 = all cores.
// Cost: N^2 F multiply-adds (N = 5000, F = 300: 7.5e9) and N F floats of memory.
// Throws tinct::Error on malformed or non-finite input or identical training vectors.
ApplicabilityModel fit_applicability(const std::vector<float>& features, int feature_count,
                                     const std::vector<int>& folds,
                                     const std::vector<double>& weights = {}, int threads = 1);

// index receives the dissimilarity index of each of `count` raw (unstandardised) query
// vectors, queries (count, F) row-major. Cost N F multiply-adds per query, memory 64 N floats
// per thread: call it on blocks of any size (a map's row of windows). A non-finite query
// feature gives a non-finite index: mask invalid windows first.
void applicability_index(const ApplicabilityModel& model, const float* queries, std::size_t count,
                         float* index, int threads = 1);

std::vector<float> applicability_index(const ApplicabilityModel& model,
                                       const std::vector<float>& queries, int threads = 1);

}  // namespace tinct
