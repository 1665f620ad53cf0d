#include "study/baseline_verdict.hpp"

#include "study/comparison_sentence.hpp"
#include "study/report_numbers.hpp"

namespace tinct {

namespace {

const ArmBudgetSummary* best_baseline(const StudyReport& report, std::size_t budget) {
  const ArmBudgetSummary* best = nullptr;
  for (const auto& summary : report.summaries) {
    if (summary.budget != budget || !is_baseline(report, summary.arm)) continue;
    if (!best || summary.macro_f1.mean > best->macro_f1.mean) best = &summary;
  }
  return best;
}

const PairedComparison* comparison_between(const StudyReport& report, const std::string& arm,
                                           const std::string& other, std::size_t budget) {
  for (const auto& c : report.comparisons) {
    if (c.budget != budget || c.metric != Metric::macro_f1) continue;
    if ((c.arm_a == arm && c.arm_b == other) || (c.arm_a == other && c.arm_b == arm)) return &c;
  }
  return nullptr;
}

bool arm_shown_better_than(const PairedComparison* c, const std::string& arm) {
  if (!c) return false;
  const ComparisonVerdict verdict = comparison_verdict(*c);
  return (verdict == ComparisonVerdict::a_better && c->arm_a == arm) ||
         (verdict == ComparisonVerdict::b_better && c->arm_b == arm);
}

// "pretrained 0.63 (paired difference -0.05, 95 % interval -0.09 to -0.01)", the difference
// taken as arm minus baseline; `why` adds a reason when the mean is higher but not shown.
std::string arm_entry(const ArmBudgetSummary& arm, const ArmBudgetSummary& baseline, const PairedComparison* c) {
  std::string text = arm.arm + " " + fixed_text(arm.macro_f1.mean, 2);
  std::vector<std::string> notes;
  if (c) {
    const double sign = c->arm_a == arm.arm ? 1.0 : -1.0;
    const double difference = sign * c->mean_difference;
    const double low = sign > 0 ? c->low : -c->high, high = sign > 0 ? c->high : -c->low;
    const int decimals = decimals_keeping_sign({difference, low, high});
    notes.push_back("paired difference " + signed_text(difference, decimals) + ", 95 % interval " +
                    fixed_text(low, decimals) + " to " + fixed_text(high, decimals));
  }
  if (!arm_shown_better_than(c, arm.arm) && arm.macro_f1.mean > baseline.macro_f1.mean) {
    notes.push_back(c ? "higher on average, not confirmed by the paired comparison"
                      : "higher on average, not compared pairwise");
  }
  for (std::size_t i = 0; i < notes.size(); ++i) text += (i == 0 ? " (" : "; ") + notes[i];
  return text + (notes.empty() ? "" : ")");
}

std::string joined(const std::vector<std::string>& items) {
  std::string text;
  for (std::size_t i = 0; i < items.size(); ++i) text += (i ? ", " : "") + items[i];
  return text;
}

// "With 5 labels per class, the best pixel baseline is logistic 3x3 at 0.69 macro F1. No deep
// arm beats it: pretrained 0.63 (paired difference ...), scratch 0.56."
std::string budget_paragraph(const StudyReport& report, std::size_t budget, const ArmBudgetSummary& baseline) {
  std::vector<std::string> beats, others;
  for (const auto& arm : report.arms) {
    const ArmBudgetSummary* summary = find_summary(report, arm.name, budget);
    if (arm.kind == ArmKind::baseline || !summary) continue;
    const PairedComparison* c = comparison_between(report, arm.name, baseline.arm, budget);
    (arm_shown_better_than(c, arm.name) ? beats : others).push_back(arm_entry(*summary, baseline, c));
  }
  if (beats.empty() && others.empty()) return "";
  std::string text = capitalised(budget_phrase(report.budgets[budget])) + ", the best pixel baseline is " +
                     baseline.arm + " at " + fixed_text(baseline.macro_f1.mean, 2) + " macro F1.";
  if (beats.empty()) return text + " No deep arm beats it: " + joined(others) + ".";
  text += " Beats it: " + joined(beats) + ".";
  if (!others.empty()) text += " Does not beat it: " + joined(others) + ".";
  return text;
}

}  // namespace

std::vector<std::string> baseline_sentences(const StudyReport& report) {
  std::vector<std::string> paragraphs;
  for (std::size_t budget = 0; budget < report.budgets.size(); ++budget) {
    const ArmBudgetSummary* baseline = best_baseline(report, budget);
    if (!baseline) continue;
    const std::string paragraph = budget_paragraph(report, budget, *baseline);
    if (!paragraph.empty()) paragraphs.push_back(paragraph);
  }
  return paragraphs;
}

}  // namespace tinct
