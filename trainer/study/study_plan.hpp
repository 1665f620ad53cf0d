// Everything a study will run, worked out before anything runs: each arm x cell as a run
// with its folder and config hash (so finished runs are recognised and bad configs fail
// first), deep arms as finetune configs, pixel baselines and ensembles as records of what
// they are made from.
#pragma once

#include <cstdint>
#include <filesystem>
#include <string>
#include <vector>

#include "baselines/baseline_arm.hpp"
#include "finetune/finetune_config.hpp"
#include "study/study_matrix.hpp"

namespace tinct {

enum class PlannedKind { deep, baseline, ensemble };

struct PlannedRun {
  PlannedKind kind = PlannedKind::deep;
  std::string arm;
  StudyCell cell;
  std::filesystem::path folder;  // relative to the study folder
  std::string config_text;       // deep: the composed finetune config; else the recorded config
  std::string hash;              // SHA-256 of the config.resolved.yaml a finished run holds
  std::uint64_t partition = 0;   // the fold partition the run's split comes from
  FinetuneConfig finetune;       // deep: its config; baseline and ensemble: the base config of the cell
  BaselineKind baseline = BaselineKind::random_forest;
  std::vector<std::size_t> members;  // ensemble: indices of the member runs in StudyPlan::runs
  std::vector<double> weights;       // ensemble: one per member, summing to 1
};

struct StudyPlan {
  StudyConfig config;
  std::filesystem::path folder;  // the study folder, absolute
  std::vector<PlannedRun> runs;  // deep runs, then baselines, then ensembles; cells in study_cells order
  std::vector<std::string> warnings;
};

StudyPlan plan_study(const StudyConfig& config);

}  // namespace tinct
