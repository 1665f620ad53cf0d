#include "study/study_config.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <set>

#include "study/finetune_overrides.hpp"
#include "util/error.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

const std::set<std::string> kArmKeys{"name", "ensemble", "weights"};

StudyArmConfig read_arm(const ConfigNode& node) {
  StudyArmConfig arm;
  arm.name = node.text("name");
  if (arm.name.empty() || arm.name.find_first_of("/\\") != std::string::npos || arm.name[0] == '.') {
    node.fail("name", "\"" + arm.name + "\" cannot name a folder; use letters, digits, '-', '_' or '+'");
  }
  if (node.has("ensemble")) {
    arm.members = node.texts("ensemble");
    if (arm.members.size() < 2) node.fail("ensemble", "an ensemble needs at least two member arms");
    if (node.has("weights")) {
      arm.weights = node.numbers("weights");
      if (arm.weights.size() != arm.members.size()) {
        node.fail("weights", "gives " + std::to_string(arm.weights.size()) + " weights for " +
                                 std::to_string(arm.members.size()) + " members; give one per member");
      }
    }
    node.finish();
    return arm;
  }
  arm.overrides = YAML::Node(YAML::NodeType::Map);
  for (const std::string& key : node.keys()) {
    if (kArmKeys.count(key)) continue;
    if (study_owned_key(key)) {
      node.fail(key, "is set by the study for every run (output, budget, split folds and seed come from the "
                     "study config and the base finetune config); remove it from the arm");
    }
    if (key == "train" && node.raw()["train"].IsMap() && node.raw()["train"]["seed"]) {
      node.fail(key, "train.seed is set by the study (seeds:); remove it from the arm");
    }
    node.allow(key);
    arm.overrides[key] = YAML::Clone(node.raw()[key]);
  }
  node.allow("weights");
  node.finish();
  make_paths_absolute(arm.overrides, node.folder());
  return arm;
}

StudyBudget read_budget(const ConfigNode& item) {
  const std::string text = item.scalar_text();
  StudyBudget budget;
  if (text == "all") {
    budget.kind = BudgetKind::all;
    return budget;
  }
  char* end = nullptr;
  const double value = std::strtod(text.c_str(), &end);
  const bool number = end && *end == '\0' && !text.empty() && std::isfinite(value);
  if (number && value >= 1 && value == std::floor(value)) {
    budget.kind = BudgetKind::per_class;
  } else if (number && value > 0 && value < 1) {
    budget.kind = BudgetKind::fraction;
  } else {
    item.fail("", "is \"" + text + "\"; a budget is a count per class (5), a fraction of each class (0.25) or all");
  }
  budget.value = value;
  return budget;
}

// In increasing order of labels: counts, then fractions, then all.
double budget_order(const StudyBudget& b) {
  return b.kind == BudgetKind::per_class ? b.value : b.kind == BudgetKind::fraction ? 1e9 + b.value : 2e9;
}

std::vector<StudyBudget> read_budgets(const ConfigNode& root) {
  std::vector<StudyBudget> budgets;
  if (!root.has("budgets")) {
    root.texts("budgets", std::vector<std::string>{"all"});
    StudyBudget all;
    all.kind = BudgetKind::all;
    return {all};
  }
  for (const ConfigNode& item : root.items("budgets")) {
    const StudyBudget budget = read_budget(item);
    for (const StudyBudget& seen : budgets) {
      if (budget_folder_name(seen) == budget_folder_name(budget)) item.fail("", "is listed twice");
    }
    budgets.push_back(budget);
  }
  if (budgets.empty()) root.fail("budgets", "lists no budget; give at least one (e.g. [5, 15, all])");
  std::stable_sort(budgets.begin(), budgets.end(),
                   [](const StudyBudget& a, const StudyBudget& b) { return budget_order(a) < budget_order(b); });
  return budgets;
}

std::vector<int> read_folds(const ConfigNode& root) {
  std::vector<int> folds;
  if (root.peek("folds") || !root.has("folds")) {
    const auto count = static_cast<int>(root.integer("folds", 1, 1, 100));
    for (int f = 0; f < count; ++f) folds.push_back(f);
    return folds;
  }
  for (const double f : root.numbers("folds")) {
    if (f < 0 || f != std::floor(f)) root.fail("folds", "lists " + std::to_string(f) + "; folds are numbered 0, 1, ...");
    if (std::find(folds.begin(), folds.end(), static_cast<int>(f)) != folds.end()) root.fail("folds", "lists a fold twice");
    folds.push_back(static_cast<int>(f));
  }
  if (folds.empty()) root.fail("folds", "lists no fold");
  return folds;
}

std::vector<int> read_seeds(const ConfigNode& root) {
  std::vector<int> seeds;
  for (const double s : root.numbers("seeds", std::vector<double>{1})) {
    if (s < 0 || s != std::floor(s) || s > 2147483647) root.fail("seeds", "seeds are whole numbers >= 0");
    if (std::find(seeds.begin(), seeds.end(), static_cast<int>(s)) != seeds.end()) root.fail("seeds", "lists a seed twice");
    seeds.push_back(static_cast<int>(s));
  }
  if (seeds.empty()) root.fail("seeds", "lists no seed");
  return seeds;
}

std::vector<BaselineKind> read_baselines(const ConfigNode& root) {
  std::vector<BaselineKind> kinds;
  for (const std::string& name :
       root.texts("baselines", std::vector<std::string>{"random_forest", "logistic_regression"})) {
    const BaselineKind kind = baseline_kind_from_name(name, root.where("baselines"));
    if (std::find(kinds.begin(), kinds.end(), kind) != kinds.end()) root.fail("baselines", name + " is listed twice");
    kinds.push_back(kind);
  }
  return kinds;
}

void check_arms(const ConfigNode& root, const StudyConfig& config) {
  std::set<std::string> names, deep;
  for (const BaselineKind kind : config.baselines) names.insert(to_string(kind));
  for (const StudyArmConfig& arm : config.arms) {
    if (!names.insert(arm.name).second) {
      root.fail("arms", "the name \"" + arm.name + "\" is used twice (baselines are named random_forest and "
                        "logistic_regression); give each arm its own name");
    }
    if (!arm.is_ensemble()) deep.insert(arm.name);
  }
  if (deep.empty()) root.fail("arms", "no arm fine-tunes anything; give at least one arm that is not an ensemble");
  for (const StudyArmConfig& arm : config.arms) {
    for (const std::string& member : arm.members) {
      if (!deep.count(member)) {
        root.fail("arms", "ensemble \"" + arm.name + "\" names \"" + member + "\", which is not a fine-tuned arm "
                          "of this study (ensembles average fine-tuned arms)");
      }
    }
  }
}

std::vector<std::pair<std::string, std::string>> read_compare(const ConfigNode& root, const StudyConfig& config) {
  const std::vector<std::string> names = study_arm_names(config);
  const auto known = [&](const std::string& n) { return std::find(names.begin(), names.end(), n) != names.end(); };
  std::vector<std::pair<std::string, std::string>> pairs;
  if (!root.has("compare")) {
    if (!known("scratch")) return pairs;
    for (const std::string& name : names) {
      if (name != "scratch") pairs.emplace_back(name, "scratch");
    }
    return pairs;
  }
  root.allow("compare");
  const YAML::Node list = root.raw()["compare"];
  if (!list.IsSequence()) root.fail("compare", "must be a list of pairs, e.g. [[pretrained, scratch]]");
  for (const YAML::Node& pair : list) {
    if (!pair.IsSequence() || pair.size() != 2 || !pair[0].IsScalar() || !pair[1].IsScalar()) {
      root.fail("compare", "each entry is a pair of arm names, e.g. [pretrained, scratch]");
    }
    const std::string a = pair[0].Scalar(), b = pair[1].Scalar();
    for (const std::string& n : {a, b}) {
      if (!known(n)) root.fail("compare", "names \"" + n + "\", which is not an arm or baseline of this study");
    }
    if (a == b) root.fail("compare", "compares " + a + " with itself");
    pairs.emplace_back(a, b);
  }
  return pairs;
}

void read_distributed(const ConfigNode& node, StudyConfig& config) {
  config.port = static_cast<int>(node.integer("port", config.port, 1, 65535));
  config.timeout_seconds = static_cast<int>(node.integer("timeout", config.timeout_seconds, 1, 86400));
  node.finish();
}

}  // namespace

std::vector<std::string> study_arm_names(const StudyConfig& config) {
  std::vector<std::string> names;
  for (const auto& arm : config.arms) {
    if (!arm.is_ensemble()) names.push_back(arm.name);
  }
  for (const auto& arm : config.arms) {
    if (arm.is_ensemble()) names.push_back(arm.name);
  }
  for (const BaselineKind kind : config.baselines) names.push_back(to_string(kind));
  return names;
}

std::string budget_folder_name(const StudyBudget& budget) {
  if (budget.kind == BudgetKind::all) return "all";
  char text[32];
  std::snprintf(text, sizeof(text), "%g", budget.value);
  return text;
}

StudyConfig read_study_config(const ConfigNode& root) {
  StudyConfig config;
  config.output = root.path("output", false);
  config.name = root.text("name", config.output.filename().string());
  config.finetune = root.path("finetune", true);
  for (const ConfigNode& item : root.items("arms")) config.arms.push_back(read_arm(item));
  if (config.arms.empty()) root.fail("arms", "required: list the arms, e.g. [{name: scratch, init: {from: scratch}}]");
  config.baselines = read_baselines(root);
  check_arms(root, config);
  config.seeds = read_seeds(root);
  config.budgets = read_budgets(root);
  config.folds = read_folds(root);
  config.compare = read_compare(root, config);
  config.parallel = static_cast<int>(root.integer("parallel", kDefaultParallel, 1, 256));
  config.allow_random = root.flag("allow_random", false);
  read_distributed(root.section("distributed"), config);
  return config;
}

}  // namespace tinct
