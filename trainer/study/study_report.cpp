#include "study/study_report.hpp"

#include <set>

#include "study/report_numbers.hpp"
#include "util/error.hpp"

namespace tinct {

const char* const kStudyCautions =
    "These results and any maps made from them are decision support for planning "
    "surveillance, not proof of the presence or absence of a vector or a pathogen. "
    "Predictions depend on the labels and scenes used and can be wrong, especially outside "
    "the region, season and sensor they were trained on. Field and laboratory confirmation, "
    "and the protocols of the responsible public-health authority, come first.";

namespace {

void check_arm(const StudyReport& report, const std::string& arm, const std::string& where) {
  if (!find_arm(report, arm)) {
    fail_runtime("study report: " + where + " names arm '" + arm +
                 "', which is not among the study's arms; add it to StudyReport::arms");
  }
}

void check_budget(const StudyReport& report, std::size_t budget, const std::string& where) {
  if (budget >= report.budgets.size()) {
    fail_runtime("study report: " + where + " refers to label budget " + std::to_string(budget) +
                 ", but the study has " + std::to_string(report.budgets.size()) + " budgets");
  }
}

void check_entry(const StudyReport& report, const std::string& arm, std::size_t budget,
                 const std::string& where) {
  check_arm(report, arm, where);
  check_budget(report, budget, where);
}

void check_confusion(const StudyReport& report, const ConfusionMatrix& matrix,
                     const std::string& where) {
  check_entry(report, matrix.arm, matrix.budget, where);
  const std::size_t classes = report.class_names.size();
  bool square = matrix.counts.size() == classes;
  for (const auto& row : matrix.counts) square = square && row.size() == classes;
  if (!square) {
    fail_runtime("study report: " + where + " is not " + std::to_string(classes) + " x " +
                 std::to_string(classes) + " (one row and column per class name)");
  }
}

}  // namespace

void check_study_report(const StudyReport& report) {
  std::set<std::string> names;
  for (const auto& arm : report.arms) {
    if (!names.insert(arm.name).second) {
      fail_runtime("study report: arm '" + arm.name + "' is listed twice");
    }
  }
  for (std::size_t i = 0; i < report.runs.size(); ++i) {
    check_entry(report, report.runs[i].arm, report.runs[i].budget, "run " + std::to_string(i));
  }
  for (std::size_t i = 0; i < report.failed_runs.size(); ++i) {
    check_entry(report, report.failed_runs[i].arm, report.failed_runs[i].budget,
                "failed run " + std::to_string(i));
  }
  for (std::size_t i = 0; i < report.summaries.size(); ++i) {
    check_entry(report, report.summaries[i].arm, report.summaries[i].budget,
                "summary " + std::to_string(i));
  }
  for (std::size_t i = 0; i < report.comparisons.size(); ++i) {
    const auto& comparison = report.comparisons[i];
    const std::string where = "comparison " + std::to_string(i);
    check_entry(report, comparison.arm_a, comparison.budget, where);
    check_arm(report, comparison.arm_b, where);
  }
  for (std::size_t i = 0; i < report.ensembles.size(); ++i) {
    const auto& ensemble = report.ensembles[i];
    const std::string where = "ensemble diversity " + std::to_string(i);
    check_entry(report, ensemble.ensemble, ensemble.budget, where);
    for (const auto& member : ensemble.members) check_arm(report, member, where);
  }
  for (std::size_t i = 0; i < report.confusions.size(); ++i) {
    check_confusion(report, report.confusions[i], "confusion matrix " + std::to_string(i));
  }
  for (std::size_t i = 0; i < report.reliability.size(); ++i) {
    check_entry(report, report.reliability[i].arm, report.reliability[i].budget,
                "reliability diagram " + std::to_string(i));
  }
  for (std::size_t i = 0; i < report.curves.size(); ++i) {
    check_entry(report, report.curves[i].arm, report.curves[i].budget,
                "training curve " + std::to_string(i));
  }
}

const StudyArm* find_arm(const StudyReport& report, const std::string& name) {
  for (const auto& arm : report.arms) {
    if (arm.name == name) return &arm;
  }
  return nullptr;
}

const ArmBudgetSummary* find_summary(const StudyReport& report, const std::string& arm,
                                     std::size_t budget) {
  for (const auto& summary : report.summaries) {
    if (summary.arm == arm && summary.budget == budget) return &summary;
  }
  return nullptr;
}

bool is_baseline(const StudyReport& report, const std::string& arm) {
  const StudyArm* found = find_arm(report, arm);
  return found && found->kind == ArmKind::baseline;
}

std::string arm_kind_name(ArmKind kind) {
  switch (kind) {
    case ArmKind::pretrained: return "pretrained";
    case ArmKind::scratch: return "scratch";
    case ArmKind::baseline: return "baseline";
    case ArmKind::probe: return "probe";
    case ArmKind::ensemble: return "ensemble";
  }
  return "unknown";
}

std::string metric_name(Metric metric) {
  switch (metric) {
    case Metric::macro_f1: return "macro F1";
    case Metric::accuracy: return "accuracy";
    case Metric::balanced_accuracy: return "balanced accuracy";
    case Metric::kappa: return "kappa";
    case Metric::ece: return "ECE";
  }
  return "unknown";
}

bool higher_is_better(Metric metric) { return metric != Metric::ece; }

std::string budget_short(const StudyBudget& budget) {
  switch (budget.kind) {
    case BudgetKind::per_class: return count_text(budget.value);
    case BudgetKind::fraction: return percent_text(budget.value);
    case BudgetKind::all: return "all";
  }
  return "?";
}

std::string budget_label(const StudyBudget& budget) {
  switch (budget.kind) {
    case BudgetKind::per_class:
      return count_text(budget.value) + (budget.value == 1 ? " label per class" : " labels per class");
    case BudgetKind::fraction: return percent_text(budget.value) + " of labels";
    case BudgetKind::all: return "all labels";
  }
  return "?";
}

std::string budget_phrase(const StudyBudget& budget) {
  switch (budget.kind) {
    case BudgetKind::per_class: return "with " + budget_label(budget);
    case BudgetKind::fraction: return "with " + percent_text(budget.value) + " of the labels";
    case BudgetKind::all: return "with all labels";
  }
  return "?";
}

std::optional<double> labels_per_class(const StudyBudget& budget) {
  if (budget.kind == BudgetKind::per_class && budget.value > 0) return budget.value;
  if (budget.labels_per_class_seen > 0) return budget.labels_per_class_seen;
  return std::nullopt;
}

}  // namespace tinct
