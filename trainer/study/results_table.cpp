#include "study/results_table.hpp"

#include <algorithm>
#include <sstream>

#include "study/comparison_sentence.hpp"
#include "study/report_numbers.hpp"
#include "study/study_findings.hpp"

namespace tinct {

namespace {

// Columns padded to their widest cell; numbers (right_aligned) to the right.
class TextTable {
 public:
  TextTable(std::vector<std::string> headers, std::vector<bool> right_aligned)
      : headers_(std::move(headers)), right_(std::move(right_aligned)) {}
  void add(std::vector<std::string> row) { rows_.push_back(std::move(row)); }

  std::string str() const {
    std::vector<std::size_t> widths(headers_.size());
    for (std::size_t c = 0; c < headers_.size(); ++c) {
      widths[c] = headers_[c].size();
      for (const auto& row : rows_) widths[c] = std::max(widths[c], row[c].size());
    }
    std::string out = line(headers_, widths);
    std::size_t rule = 0;
    for (const auto w : widths) rule += w + 2;
    out += std::string(rule - 2, '-') + "\n";
    for (const auto& row : rows_) out += line(row, widths);
    return out;
  }

 private:
  std::string line(const std::vector<std::string>& cells, const std::vector<std::size_t>& widths) const {
    std::string out;
    for (std::size_t c = 0; c < cells.size(); ++c) {
      const std::string pad(widths[c] - cells[c].size(), ' ');
      out += right_[c] ? pad + cells[c] : cells[c] + pad;
      if (c + 1 < cells.size()) out += "  ";
    }
    while (!out.empty() && out.back() == ' ') out.pop_back();
    return out + "\n";
  }

  std::vector<std::string> headers_;
  std::vector<bool> right_;
  std::vector<std::vector<std::string>> rows_;
};

std::string optional_p(const std::optional<double>& p) { return p ? p_text(*p) : "-"; }

// "5 per class", "25 %", "all": short enough for a column.
std::string budget_column(const StudyBudget& budget) {
  return budget.kind == BudgetKind::per_class ? budget_short(budget) + " per class" : budget_short(budget);
}

std::string ece_text(const ArmBudgetSummary& s) {
  if (!s.ece_before && !s.ece_after) return "-";
  return (s.ece_before ? fixed_text(s.ece_before->mean, 3) : "-") + " -> " +
         (s.ece_after ? fixed_text(s.ece_after->mean, 3) : "-");
}

std::string scores_table(const StudyReport& report) {
  TextTable table({"budget", "arm", "runs", "macro F1", "95 % interval", "sd", "accuracy", "kappa",
                   "ECE before -> after"},
                  {false, false, true, true, true, true, true, true, false});
  for (std::size_t b = 0; b < report.budgets.size(); ++b) {
    for (const auto& arm : report.arms) {
      const ArmBudgetSummary* s = find_summary(report, arm.name, b);
      if (!s) continue;
      const std::string name = arm.name + (arm.kind == ArmKind::baseline ? " (baseline)" : "");
      table.add({budget_column(report.budgets[b]), name, std::to_string(s->macro_f1.n),
                 fixed_text(s->macro_f1.mean, 3), fixed_text(s->macro_f1.low, 3) + " to " + fixed_text(s->macro_f1.high, 3),
                 fixed_text(s->macro_f1.sd, 3), fixed_text(s->accuracy.mean, 3), fixed_text(s->kappa.mean, 3),
                 ece_text(*s)});
    }
  }
  return table.str();
}

// The verdicts are in the findings below, in words.
std::string comparisons_table(const StudyReport& report) {
  TextTable table({"budget", "first - second", "metric", "difference", "95 % interval", "Wilcoxon p",
                   "McNemar p", "Holm p", "pairs"},
                  {false, false, false, true, true, true, true, true, true});
  for (const auto& c : report.comparisons) {
    const int decimals = std::max(3, decimals_keeping_sign({c.mean_difference, c.low, c.high}));
    table.add({budget_column(report.budgets[c.budget]), c.arm_a + " - " + c.arm_b, metric_name(c.metric),
               signed_text(c.mean_difference, decimals),
               fixed_text(c.low, decimals) + " to " + fixed_text(c.high, decimals), optional_p(c.wilcoxon_p),
               optional_p(c.mcnemar_p), optional_p(c.holm_p), std::to_string(c.pairs)});
  }
  return table.str();
}

void add_paragraphs(std::string& out, const std::string& heading, const std::vector<std::string>& items,
                    std::size_t width) {
  if (items.empty()) return;
  out += "\n" + heading + "\n";
  for (const auto& item : items) out += "- " + wrapped(item, width - 2, "  ") + "\n";
}

}  // namespace

std::string wrapped(const std::string& text, std::size_t width, const std::string& indent) {
  std::istringstream words(text);
  std::string out, line, word;
  while (words >> word) {
    if (!line.empty() && line.size() + 1 + word.size() > width) {
      out += line + "\n" + indent;
      line.clear();
    }
    line += (line.empty() ? "" : " ") + word;
  }
  return out + line;
}

std::string study_results_table(const StudyReport& report, std::size_t width) {
  check_study_report(report);
  std::string out = wrapped("Study " + report.name + ": scores on test chips per arm and label budget", width) + "\n";
  if (!report.summary_interval.empty()) out += "(95 % interval: " + report.summary_interval + ")\n";
  out += scores_table(report);
  if (!report.comparisons.empty()) {
    out += "\nPaired comparisons\n" + comparisons_table(report);
  }
  const StudyFindings findings = study_findings(report);
  add_paragraphs(out, "Findings", findings.comparisons, width);
  add_paragraphs(out, "Against the pixel baselines", findings.baselines, width);
  add_paragraphs(out, "Ensembles", findings.ensembles, width);
  add_paragraphs(out, "Warnings", report.warnings, width);
  std::vector<std::string> failed;
  for (const auto& f : report.failed_runs) {
    failed.push_back(f.arm + ", " + budget_label(report.budgets[f.budget]) + ", seed " +
                     std::to_string(f.seed) + ", fold " + std::to_string(f.fold) + ": " + f.message);
  }
  add_paragraphs(out, "Failed runs (left out of every figure above)", failed, width);
  out += "\n" + wrapped("Caution: " + report.cautions, width) + "\n";
  return out;
}

}  // namespace tinct
