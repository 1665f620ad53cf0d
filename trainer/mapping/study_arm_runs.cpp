#include "mapping/study_arm_runs.hpp"

#include <algorithm>
#include <map>

#include "util/error.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

// Sub-folders named PREFIX-VALUE, by value.
std::map<std::string, fs::path> named_folders(const fs::path& folder, const std::string& prefix) {
  std::map<std::string, fs::path> found;
  if (!fs::is_directory(folder)) return found;
  for (const auto& entry : fs::directory_iterator(folder)) {
    const std::string name = entry.path().filename().string();
    if (entry.is_directory() && name.rfind(prefix + "-", 0) == 0) found[name.substr(prefix.size() + 1)] = entry.path();
  }
  return found;
}

int number_of(const std::string& value) {
  try {
    return std::stoi(value);
  } catch (const std::exception&) {
    return -1;
  }
}

bool has_models(const fs::path& folder) {
  if (!fs::is_directory(folder)) return false;
  for (const auto& entry : fs::recursive_directory_iterator(folder)) {
    if (entry.path().filename() == "model.pt") return true;
  }
  return false;
}

std::string joined(const std::vector<std::string>& names) {
  std::string text;
  for (const auto& name : names) text += (text.empty() ? "" : ", ") + name;
  return text.empty() ? "none" : text;
}

// "all" above every number, numbers by value.
double budget_rank(const std::string& value) {
  if (value == "all") return 1e300;
  try {
    return std::stod(value);
  } catch (const std::exception&) {
    return -1;
  }
}

bool smaller_budget(const std::string& a, const std::string& b) { return budget_rank(a) < budget_rank(b); }

fs::path arm_folder(const StudyArmChoice& c) {
  const fs::path runs = c.study / "runs";
  if (!fs::is_directory(runs)) {
    fail_usage("map: " + c.study.string() + " has no runs/ folder; study: takes the folder a study wrote (its output:)");
  }
  std::vector<std::string> arms, mappable;
  for (const auto& entry : fs::directory_iterator(runs)) {
    if (!entry.is_directory()) continue;
    arms.push_back(entry.path().filename().string());
    if (has_models(entry.path())) mappable.push_back(arms.back());
  }
  std::sort(arms.begin(), arms.end());
  std::sort(mappable.begin(), mappable.end());
  if (std::find(arms.begin(), arms.end(), c.arm) == arms.end()) {
    fail_usage("map: study " + c.study.string() + " has no arm \"" + c.arm + "\"; its arms: " + joined(arms) +
               " (with fine-tuned models to map: " + joined(mappable) + ")");
  }
  if (std::find(mappable.begin(), mappable.end(), c.arm) == mappable.end()) {
    fail_usage("map: arm \"" + c.arm + "\" of study " + c.study.string() +
               " holds no fine-tuned model.pt (a pixel baseline, an ensemble arm or runs not yet finished); arms "
               "to map: " + joined(mappable) + " (for an ensemble arm, list its members' runs under runs:)");
  }
  return runs / c.arm;
}

std::string pick_budget(const StudyArmChoice& c, const fs::path& arm) {
  std::vector<std::string> budgets;
  for (const auto& [value, folder] : named_folders(arm, "budget")) {
    if (has_models(folder)) budgets.push_back(value);
  }
  std::sort(budgets.begin(), budgets.end(), smaller_budget);
  if (!c.budget) return budgets.back();
  if (std::find(budgets.begin(), budgets.end(), *c.budget) == budgets.end()) {
    fail_usage("map: arm \"" + c.arm + "\" has no fine-tuned runs at budget " + *c.budget + "; its budgets: " +
               joined(budgets));
  }
  return *c.budget;
}

}  // namespace

StudyArmRuns resolve_study_arm(const StudyArmChoice& c) {
  const fs::path arm = arm_folder(c);
  StudyArmRuns result;
  result.budget = pick_budget(c, arm);
  const auto seeds = named_folders(arm / ("budget-" + result.budget), "seed");
  std::vector<int> folds;
  for (const auto& [seed, folder] : seeds) {
    for (const auto& [fold, run] : named_folders(folder, "fold")) {
      if (fs::exists(run / "model.pt") && std::find(folds.begin(), folds.end(), number_of(fold)) == folds.end()) {
        folds.push_back(number_of(fold));
      }
    }
  }
  std::sort(folds.begin(), folds.end());
  result.fold = c.fold ? *c.fold : folds.front();
  if (std::find(folds.begin(), folds.end(), result.fold) == folds.end()) {
    std::vector<std::string> names;
    for (int f : folds) names.push_back(std::to_string(f));
    fail_usage("map: arm \"" + c.arm + "\" at budget " + result.budget + " has no fine-tuned run of fold " +
               std::to_string(result.fold) + "; its folds: " + joined(names));
  }
  std::vector<std::pair<int, fs::path>> by_seed;
  for (const auto& [seed, folder] : seeds) {
    const fs::path run = folder / ("fold-" + std::to_string(result.fold));
    if (fs::exists(run / "model.pt")) by_seed.emplace_back(number_of(seed), run);
  }
  std::sort(by_seed.begin(), by_seed.end());
  for (const auto& [seed, run] : by_seed) result.runs.push_back(run);
  return result;
}

}  // namespace tinct
