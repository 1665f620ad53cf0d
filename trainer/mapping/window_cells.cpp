#include "mapping/window_cells.hpp"

#include <algorithm>


namespace tinct {

void fill_applicability(const float* features, int feature_count, const RunEvidence& evidence, int threads,
                        std::vector<CellValues>& cells) {
  if (!evidence.applicability) return;
  const auto f = static_cast<std::size_t>(feature_count);
  std::vector<std::size_t> valid;
  for (std::size_t i = 0; i < cells.size(); ++i) {
    if (cells[i].valid) valid.push_back(i);
  }
  std::vector<float> queries(valid.size() * f), index(valid.size());
  for (std::size_t j = 0; j < valid.size(); ++j) {
    std::copy(features + valid[j] * f, features + (valid[j] + 1) * f, queries.begin() + j * f);
  }
  if (!valid.empty()) applicability_index(*evidence.applicability, queries.data(), valid.size(), index.data(), threads);
  for (std::size_t j = 0; j < valid.size(); ++j) {
    cells[valid[j]].aoa_index = index[j];
    cells[valid[j]].inside = evidence.applicability->inside(index[j]);
  }
}

void fill_cells(const WindowOutputs& outputs, int classes, int feature_count, const RunEvidence& evidence,
                int threads, bool with_applicability, std::vector<CellValues>& cells) {
  const auto k = static_cast<std::size_t>(classes);
  for (std::size_t i = 0; i < cells.size(); ++i) {
    CellValues& cell = cells[i];
    if (!cell.valid) continue;
    const auto p = outputs.probabilities.begin() + static_cast<std::ptrdiff_t>(i * k);
    cell.probabilities.assign(p, p + static_cast<std::ptrdiff_t>(k));
    cell.predicted = static_cast<int>(std::max_element(p, p + static_cast<std::ptrdiff_t>(k)) - p);
    cell.uncertainty = normalised_entropy(cell.probabilities.data(), classes);
    cell.disagreement = outputs.disagreement[i];
  }
  if (with_applicability) fill_applicability(outputs.features.data(), feature_count, evidence, threads, cells);
}

}  // namespace tinct
