#include "study/study_run_config.hpp"

#include "study/finetune_overrides.hpp"
#include "util/error.hpp"
#include "util/sha256.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

// The study's seed also draws the budgeted labels (budget.seed), so seeds vary which labels a
// run sees as well as its training; split.seed stays fixed, so every seed has the same test sets.
void set_budget(YAML::Node config, const StudyBudget& budget, int seed) {
  config.remove("budget");
  if (budget.kind == BudgetKind::per_class) config["budget"]["per_class"] = static_cast<int>(budget.value);
  if (budget.kind == BudgetKind::fraction) config["budget"]["fraction"] = budget.value;
  config["budget"]["seed"] = seed;
}

std::string source_name(const StudyConfig& study, const StudyArmConfig* arm) {
  return study.finetune.filename().string() + (arm ? " with arm " + arm->name : "");
}

}  // namespace

YAML::Node read_base_finetune(const StudyConfig& study) {
  const ConfigNode file = ConfigNode::load(study.finetune);
  file.choice("config", {"finetune"});
  YAML::Node base = YAML::Clone(file.raw());
  make_paths_absolute(base, study.finetune.parent_path());
  return base;
}

StudyRunConfig study_run_config(const StudyConfig& study, const YAML::Node& base, const StudyArmConfig* arm,
                                const StudyCell& cell, const fs::path& output) {
  YAML::Node config = merged_config(base, arm ? arm->overrides : YAML::Node());
  config["output"] = output.string();
  set_budget(config, study.budgets[cell.budget], cell.seed);
  config["split"]["fold"] = cell.fold;
  config["train"]["seed"] = cell.seed;

  StudyRunConfig run;
  run.text = yaml_text(config);
  const ConfigNode root = ConfigNode::from_text(run.text, source_name(study, arm), study.finetune.parent_path());
  root.choice("config", {"finetune"});
  run.config = read_finetune_config(root);
  root.finish();
  run.resolved = resolved_text(root);
  run.hash = sha256_hex(run.resolved);
  const YAML::Node split = root.resolved()["split"];
  run.partition = split && split["seed"] ? split["seed"].as<std::uint64_t>() : run.config.split.seed;
  if (run.config.split.method == SplitMethod::random && !study.allow_random) {
    fail_usage(study.finetune.string() + ": split.method is random" + (arm ? " (arm " + arm->name + ")" : "") +
               "; neighbouring chips are alike (spatial autocorrelation), so a random split makes every score "
               "look better than it will be on new ground. Use split.method blocks or groups, or set "
               "allow_random: true in the study config to accept it (the report then warns)");
  }
  return run;
}

}  // namespace tinct
