// Standardising features with the training rows' mean and population standard deviation
// (scikit-learn's StandardScaler), so a linear classifier's regularisation treats every
// band alike whatever its reflectance range. A constant feature is centred, not divided.
#pragma once

#include <vector>

#include "baselines/pixel_features.hpp"

namespace tinct {

struct FeatureScaling {
  std::vector<double> mean, sd;  // (F)
};

FeatureScaling fit_scaling(const FeatureTable& train);
// (x - mean) / sd, in place; `table` has the columns `scaling` was fitted on.
void apply_scaling(const FeatureScaling& scaling, FeatureTable& table);

}  // namespace tinct
