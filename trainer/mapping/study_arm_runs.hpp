// Which runs a map of a study arm uses. A study keeps each run in
// runs/ARM/budget-B/seed-S/fold-F; the map takes every seed of the arm at one budget and
// one fold, as an ensemble: the largest budget (all labels, else the largest number) and
// the lowest fold unless budget: and fold: say otherwise. Seeds differ only in their
// random draws, so they are members of one model; folds and budgets are different
// questions (other training chips), so one of each is taken. Arms without fine-tuned
// models (pixel baselines, ensemble arms) cannot be mapped and are named as such.
#pragma once

#include <filesystem>
#include <optional>
#include <string>
#include <vector>

namespace tinct {

struct StudyArmChoice {
  std::filesystem::path study;
  std::string arm;
  std::optional<std::string> budget;  // as in the folder name: "all", "15", "0.5"
  std::optional<int> fold;
};

struct StudyArmRuns {
  std::vector<std::filesystem::path> runs;  // one per seed, by seed
  std::string budget;
  int fold = 0;
};

StudyArmRuns resolve_study_arm(const StudyArmChoice& choice);

}  // namespace tinct
