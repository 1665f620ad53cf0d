// One fine-tune of a study as a finetune config: the base config, the arm's overrides, and
// the cell's output folder, label budget, fold and seed (finetune_overrides.hpp). Read
// back through the finetune config reader, so a bad override fails before any run starts,
// and hashed as the run will hash it (config.resolved.yaml), so finished runs are known.
#pragma once

#include <yaml-cpp/yaml.h>

#include <filesystem>
#include <string>

#include "finetune/finetune_config.hpp"
#include "study/study_matrix.hpp"

namespace tinct {

struct StudyRunConfig {
  std::string text;      // the composed config, as written for `tinct finetune`
  std::string resolved;  // with every default: what the run saves as config.resolved.yaml
  std::string hash;      // SHA-256 of `resolved`
  FinetuneConfig config;
  // Runs with the same partition deal their chips into the same folds (the split's seed).
  std::uint64_t partition = 0;
};

// The base finetune config with paths made absolute (its `config:` key checked).
YAML::Node read_base_finetune(const StudyConfig& study);

// `arm` null: the base config alone (what the pixel baselines' chips are drawn from).
// Fails (usage) on a random split without allow_random, or a fold beyond split.folds.
StudyRunConfig study_run_config(const StudyConfig& study, const YAML::Node& base, const StudyArmConfig* arm,
                                const StudyCell& cell, const std::filesystem::path& output);

}  // namespace tinct
