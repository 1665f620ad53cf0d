// The bridge from a FeatureTable to OpenCV's cv::ml: a CV_32F matrix, one sample per row
// (ROW_SAMPLE), sharing the table's memory; and the present classes of a label list, which
// is what cv::ml numbers its outputs by (ascending).
#pragma once

#include <opencv2/core.hpp>

#include <set>
#include <vector>

#include "baselines/pixel_features.hpp"

namespace tinct {

// A view: valid while `table` lives and is not resized.
inline cv::Mat feature_matrix(const FeatureTable& table) {
  return cv::Mat(table.rows(), table.columns(), CV_32F, const_cast<float*>(table.values.data()));
}

inline std::vector<int> present_classes(const std::vector<int>& labels) {
  const std::set<int> present(labels.begin(), labels.end());
  return {present.begin(), present.end()};
}

}  // namespace tinct
