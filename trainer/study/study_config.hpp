// The settings of `tinct study`, read from YAML (config: study): the base finetune config,
// named arms (finetune overrides, or ensembles of other arms), pixel baselines, seeds, label
// budgets and folds (the matrix), the comparisons to make and how many fine-tunes run at
// once. Paths are read from the study config's folder.
#pragma once

#include <yaml-cpp/yaml.h>

#include <filesystem>
#include <string>
#include <utility>
#include <vector>

#include "baselines/baseline_arm.hpp"
#include "study/study_report.hpp"
#include "util/config_node.hpp"

namespace tinct {

struct StudyArmConfig {
  std::string name;
  YAML::Node overrides;               // finetune keys, relative paths made absolute
  std::vector<std::string> members;   // ensemble arms: the arms whose probabilities are averaged
  std::vector<double> weights;        // ensemble weights, one per member (empty: equal)
  bool is_ensemble() const { return !members.empty(); }
};

struct StudyConfig {
  std::string name;
  std::filesystem::path output;    // the study folder
  std::filesystem::path finetune;  // the base finetune config
  std::vector<StudyArmConfig> arms;
  std::vector<BaselineKind> baselines;
  std::vector<int> seeds;
  std::vector<StudyBudget> budgets;  // labels_per_class_seen filled in after the runs
  std::vector<int> folds;
  std::vector<std::pair<std::string, std::string>> compare;  // (arm_a, arm_b)
  int parallel = 1;
  bool allow_random = false;
  // distributed: where the ranks of a study spread over an allocation meet (rank 0's port
  // when MASTER_PORT is not set) and how long a silent rank is waited for.
  int port = 29500;
  int timeout_seconds = 300;
};

// Fine-tunes at once by default. scripts/bench.sh (study_bench.py) on 2 cores: a 24-run study
// of small models ran at 1.9 fine-tunes per minute with parallel 1 (2 threads each) against
// 11.7 with parallel 2 (1 thread each), on a machine shared with other builds; small models
// use cores better as one-thread runs side by side.
constexpr int kDefaultParallel = 2;

StudyConfig read_study_config(const ConfigNode& root);

// Every arm name of the study, deep arms first, then ensembles, then baselines.
std::vector<std::string> study_arm_names(const StudyConfig& config);

// "5", "0.25" or "all": the budget's part of run folder names (budget-5, ...).
std::string budget_folder_name(const StudyBudget& budget);

}  // namespace tinct
