#include "baselines/class_balance.hpp"

#include <algorithm>
#include <random>

namespace tinct {
namespace {

std::vector<std::vector<int>> rows_by_class(const std::vector<int>& labels, int classes) {
  std::vector<std::vector<int>> rows(static_cast<std::size_t>(classes));
  for (std::size_t i = 0; i < labels.size(); ++i) rows.at(static_cast<std::size_t>(labels[i])).push_back(static_cast<int>(i));
  return rows;
}

}  // namespace

std::vector<double> balanced_class_weights(const std::vector<int>& labels, int classes) {
  std::vector<double> weights;
  for (const auto& rows : rows_by_class(labels, classes)) {
    weights.push_back(rows.empty() ? 0.0
                                   : static_cast<double>(labels.size()) /
                                         (static_cast<double>(classes) * static_cast<double>(rows.size())));
  }
  return weights;
}

std::vector<int> balanced_resample(const std::vector<int>& labels, int classes, std::uint64_t seed) {
  const auto by_class = rows_by_class(labels, classes);
  std::size_t largest = 0;
  for (const auto& rows : by_class) largest = std::max(largest, rows.size());
  std::mt19937_64 random(seed ^ 0xBA1A2CEDULL);
  std::vector<int> picked;
  for (auto rows : by_class) {
    if (rows.empty()) continue;
    for (std::size_t copy = 0; copy < largest / rows.size(); ++copy) picked.insert(picked.end(), rows.begin(), rows.end());
    std::shuffle(rows.begin(), rows.end(), random);
    picked.insert(picked.end(), rows.begin(), rows.begin() + static_cast<long>(largest % rows.size()));
  }
  std::sort(picked.begin(), picked.end());
  return picked;
}

}  // namespace tinct
