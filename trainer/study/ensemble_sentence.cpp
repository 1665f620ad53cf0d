#include "study/ensemble_sentence.hpp"

#include "study/comparison_sentence.hpp"
#include "study/report_numbers.hpp"

namespace tinct {

namespace {

std::string list_text(const std::vector<std::string>& items) {
  std::string text;
  for (std::size_t i = 0; i < items.size(); ++i) {
    text += (i == 0 ? "" : i + 1 == items.size() ? " and " : ", ") + items[i];
  }
  return text;
}

const ArmBudgetSummary* best_member(const StudyReport& report, const EnsembleDiversity& d) {
  const ArmBudgetSummary* best = nullptr;
  for (const auto& member : d.members) {
    const ArmBudgetSummary* summary = find_summary(report, member, d.budget);
    if (summary && (!best || summary->macro_f1.mean > best->macro_f1.mean)) best = summary;
  }
  return best;
}

const PairedComparison* comparison_with(const StudyReport& report, const std::string& ensemble,
                                        const std::string& member, std::size_t budget) {
  for (const auto& c : report.comparisons) {
    if (c.budget != budget || c.metric != Metric::macro_f1) continue;
    if ((c.arm_a == ensemble && c.arm_b == member) || (c.arm_a == member && c.arm_b == ensemble)) {
      return &c;
    }
  }
  return nullptr;
}

}  // namespace

std::string ensemble_sentence(const StudyReport& report, const EnsembleDiversity& d) {
  const StudyBudget& budget = report.budgets[d.budget];
  std::string text = capitalised(budget_phrase(budget)) + ", exactly one member of " + d.ensemble +
                     " (" + list_text(d.members) + ") is wrong on " +
                     percent_text(d.exactly_one_wrong) + " of " + std::to_string(d.test_chips) +
                     " pooled test chips.";
  const ArmBudgetSummary* ensemble = find_summary(report, d.ensemble, d.budget);
  const ArmBudgetSummary* member = best_member(report, d);
  if (!ensemble || !member) return text;
  text += " The ensemble averages " + fixed_text(ensemble->macro_f1.mean, 2) +
          " macro F1, its best member, " + member->arm + ", " + fixed_text(member->macro_f1.mean, 2);
  const PairedComparison* c = comparison_with(report, d.ensemble, member->arm, d.budget);
  if (c) return text + ": " + comparison_clause(*c);
  return text + "; they were not compared pairwise, so this is no evidence that either is better.";
}

}  // namespace tinct
