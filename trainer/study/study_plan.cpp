#include "study/study_plan.hpp"

#include <map>

#include "study/study_run_config.hpp"
#include "util/sha256.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

const char* const kRandomSplitWarning =
    "The split is random (allow_random: true). Neighbouring chips are alike (spatial autocorrelation), so test "
    "chips next to training chips make every score look better than it will be on new ground.";

std::string ensemble_record(const StudyArmConfig& arm, const std::vector<double>& weights,
                            const std::vector<std::string>& member_hashes) {
  std::string text = "ensemble:\n";
  for (std::size_t m = 0; m < arm.members.size(); ++m) {
    text += "  - {arm: " + arm.members[m] + ", weight: " + std::to_string(weights[m]) + ", config_hash: " +
            member_hashes[m] + "}\n";
  }
  return text + "combine: mean of class probabilities\n";
}

std::vector<double> normalised(const StudyArmConfig& arm) {
  std::vector<double> weights = arm.weights.empty() ? std::vector<double>(arm.members.size(), 1.0) : arm.weights;
  double sum = 0;
  for (const double w : weights) sum += w;
  for (double& w : weights) w /= sum;
  return weights;
}

}  // namespace

StudyPlan plan_study(const StudyConfig& config) {
  StudyPlan plan;
  plan.config = config;
  plan.folder = fs::absolute(config.output).lexically_normal();
  const YAML::Node base = read_base_finetune(config);
  const std::vector<StudyCell> cells = study_cells(config);
  std::map<std::pair<std::string, std::size_t>, std::size_t> deep_index;  // (arm, cell) -> run
  bool random = false;

  for (const StudyArmConfig& arm : config.arms) {
    if (arm.is_ensemble()) continue;
    for (std::size_t c = 0; c < cells.size(); ++c) {
      PlannedRun run;
      run.arm = arm.name, run.cell = cells[c];
      run.folder = run_folder(config, arm.name, cells[c]);
      const StudyRunConfig composed = study_run_config(config, base, &arm, cells[c], plan.folder / run.folder);
      run.config_text = composed.text, run.hash = composed.hash, run.partition = composed.partition;
      run.finetune = composed.config;
      random = random || composed.config.split.method == SplitMethod::random;
      deep_index[{arm.name, c}] = plan.runs.size();
      plan.runs.push_back(run);
    }
  }
  for (const BaselineKind kind : config.baselines) {
    for (const StudyCell& cell : cells) {
      PlannedRun run;
      run.kind = PlannedKind::baseline, run.baseline = kind;
      run.arm = to_string(kind), run.cell = cell;
      run.folder = run_folder(config, run.arm, cell);
      const StudyRunConfig composed = study_run_config(config, base, nullptr, cell, plan.folder / run.folder);
      // The baseline, then the finetune config its chips are drawn as (split, budget, seed).
      run.config_text = "baseline: " + run.arm + "\nfeatures: pixel_and_3x3\n" + composed.resolved;
      run.hash = sha256_hex(run.config_text), run.partition = composed.partition;
      run.finetune = composed.config;
      random = random || composed.config.split.method == SplitMethod::random;
      plan.runs.push_back(run);
    }
  }
  for (const StudyArmConfig& arm : config.arms) {
    if (!arm.is_ensemble()) continue;
    for (std::size_t c = 0; c < cells.size(); ++c) {
      PlannedRun run;
      run.kind = PlannedKind::ensemble;
      run.arm = arm.name, run.cell = cells[c];
      run.folder = run_folder(config, arm.name, cells[c]);
      run.weights = normalised(arm);
      std::vector<std::string> hashes;
      for (const std::string& member : arm.members) {
        run.members.push_back(deep_index.at({member, c}));
        hashes.push_back(plan.runs[run.members.back()].hash);
      }
      run.partition = plan.runs[run.members.front()].partition;
      run.finetune = plan.runs[run.members.front()].finetune;
      run.config_text = ensemble_record(arm, run.weights, hashes);
      run.hash = sha256_hex(run.config_text);
      plan.runs.push_back(run);
    }
  }
  if (random) plan.warnings.push_back(kRandomSplitWarning);
  return plan;
}

}  // namespace tinct
