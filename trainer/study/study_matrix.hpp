// The study's matrix: every label budget x seed x fold is one cell, run once per arm; runs of
// one cell are paired (same training, validation and test chips in every arm). Each run has
// its own folder, runs/ARM/budget-B/seed-S/fold-F in the study folder.
#pragma once

#include <cstddef>
#include <filesystem>
#include <string>
#include <vector>

#include "study/study_config.hpp"

namespace tinct {

struct StudyCell {
  std::size_t budget = 0;  // index into StudyConfig::budgets
  int seed = 0, fold = 0;
};

// Budgets outermost, then seeds, then folds: small budgets (quick runs) first.
std::vector<StudyCell> study_cells(const StudyConfig& config);

// Relative to the study folder.
std::filesystem::path run_folder(const StudyConfig& config, const std::string& arm, const StudyCell& cell);

// "pretrained, budget 5, seed 1, fold 0"
std::string run_label(const StudyConfig& config, const std::string& arm, const StudyCell& cell);

}  // namespace tinct
