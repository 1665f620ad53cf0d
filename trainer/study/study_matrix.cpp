#include "study/study_matrix.hpp"

namespace tinct {

std::vector<StudyCell> study_cells(const StudyConfig& config) {
  std::vector<StudyCell> cells;
  for (std::size_t b = 0; b < config.budgets.size(); ++b) {
    for (const int seed : config.seeds) {
      for (const int fold : config.folds) cells.push_back({b, seed, fold});
    }
  }
  return cells;
}

std::filesystem::path run_folder(const StudyConfig& config, const std::string& arm, const StudyCell& cell) {
  return std::filesystem::path("runs") / arm / ("budget-" + budget_folder_name(config.budgets[cell.budget])) /
         ("seed-" + std::to_string(cell.seed)) / ("fold-" + std::to_string(cell.fold));
}

std::string run_label(const StudyConfig& config, const std::string& arm, const StudyCell& cell) {
  return arm + ", budget " + budget_folder_name(config.budgets[cell.budget]) + ", seed " + std::to_string(cell.seed) +
         ", fold " + std::to_string(cell.fold);
}

}  // namespace tinct
