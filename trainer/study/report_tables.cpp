#include "study/report_tables.hpp"

#include <algorithm>
#include <set>
#include <utility>

#include "study/arm_style.hpp"
#include "study/comparison_sentence.hpp"
#include "study/markup_text.hpp"
#include "study/report_numbers.hpp"

namespace tinct {

namespace {

std::string esc(const std::string& text) { return escape_markup(text); }

// Cell classes: "num" right-aligned figures, "label" names kept on one line, "" free text.
std::string cell(const std::string& text, const std::string& kind = "") {
  return (kind.empty() ? std::string("<td>") : "<td class=\"" + kind + "\">") + esc(text) + "</td>";
}

// Headers aligned like their columns: columns first_number..last_number hold figures.
std::string header_row(const std::vector<std::string>& names, std::size_t first_number = 99,
                       std::size_t last_number = 99) {
  std::string out = "<tr>";
  for (std::size_t i = 0; i < names.size(); ++i) {
    const bool number = i >= first_number && i <= last_number;
    out += std::string(number ? "<th class=\"num\">" : "<th>") + esc(names[i]) + "</th>";
  }
  return out + "</tr>\n";
}

std::string arm_cell(const StudyReport& report, const std::string& arm) {
  const ArmStyle style = arm_style(report, arm);
  return "<td class=\"label\"><span class=\"swatch" + std::string(style.hollow ? " hollow" : "") +
         "\" style=\"background:" + esc(style.colour) + ";border-color:" + esc(style.colour) + "\"></span>" +
         esc(arm) + "</td>";
}

std::string optional_p(const std::optional<double>& p) { return p ? p_text(*p) : "-"; }
std::string optional_mean(const std::optional<Summary>& s) { return s ? fixed_text(s->mean, 3) : "-"; }

std::string score_row(const StudyReport& report, const StudyArm& arm, const ArmBudgetSummary& s, bool first) {
  std::string classes = arm.kind == ArmKind::baseline ? "baseline" : "";
  if (first && s.budget > 0) classes += classes.empty() ? "group" : " group";  // a rule between budgets
  return "<tr" + (classes.empty() ? std::string() : " class=\"" + classes + "\"") + ">" +
         cell(first ? budget_label(report.budgets[s.budget]) : "", "label") + arm_cell(report, arm.name) +
         cell(arm_kind_name(arm.kind)) + cell(std::to_string(s.macro_f1.n), "num") +
         cell(fixed_text(s.macro_f1.mean, 3), "num") + cell(fixed_text(s.macro_f1.sd, 3), "num") +
         cell(fixed_text(s.macro_f1.low, 3) + " to " + fixed_text(s.macro_f1.high, 3), "num") +
         cell(fixed_text(s.accuracy.mean, 3), "num") + cell(fixed_text(s.balanced_accuracy.mean, 3), "num") +
         cell(fixed_text(s.kappa.mean, 3), "num") + cell(optional_mean(s.ece_before), "num") +
         cell(optional_mean(s.ece_after), "num") + "</tr>\n";
}

std::string comparison_row(const StudyReport& report, const PairedComparison& c) {
  const int decimals = std::max(3, decimals_keeping_sign({c.mean_difference, c.low, c.high}));
  return "<tr>" + cell(budget_label(report.budgets[c.budget]), "label") + cell(c.arm_a, "label") +
         cell(c.arm_b, "label") + cell(metric_name(c.metric), "label") +
         cell(signed_text(c.mean_difference, decimals), "num") +
         cell(fixed_text(c.low, decimals) + " to " + fixed_text(c.high, decimals), "num") +
         cell(optional_p(c.wilcoxon_p), "num") + cell(optional_p(c.mcnemar_p), "num") +
         cell(optional_p(c.holm_p), "num") + cell(std::to_string(c.pairs), "num") +
         cell(verdict_words(c), "verdict") + "</tr>\n";
}

// How the comparisons were made, with the resampling each names and any corrected t tests.
std::string comparisons_note(const StudyReport& report) {
  std::set<std::string> resamplings;
  for (const auto& c : report.comparisons) {
    if (!c.resampling.empty()) resamplings.insert(c.resampling);
  }
  std::string out = "<p class=\"note\">Runs are paired by seed and fold: both arms saw the same training, "
                    "validation and test chips. Difference: first arm minus second, mean over the pairs. "
                    "Interval: paired bootstrap of the mean difference";
  std::string list;
  for (const auto& r : resamplings) list += (list.empty() ? "" : "; ") + r;
  if (!list.empty()) out += ", resampling " + esc(list);
  out += ". Wilcoxon: signed-rank test over the paired runs, two-sided. McNemar: exact test on the "
         "pooled test predictions. Holm: the Wilcoxon p values adjusted for the number of comparisons.";
  std::string corrected;
  for (const auto& c : report.comparisons) {
    if (!c.corrected_t_p) continue;
    corrected += " " + esc(c.arm_a + " vs " + c.arm_b + ", " + budget_short(report.budgets[c.budget])) +
                 ": p = " + esc(p_text(*c.corrected_t_p)) + ";";
  }
  if (!corrected.empty()) out += " Corrected resampled t (Nadeau and Bengio 2003):" + corrected;
  return out + "</p>\n";
}

}  // namespace

std::string scores_table_html(const StudyReport& report) {
  std::string out = "<table>\n" + header_row({"label budget", "arm", "kind", "runs", "macro F1", "sd",
                                              "95 % interval", "accuracy", "balanced accuracy", "kappa",
                                              "ECE before", "ECE after"},
                                             3);
  for (std::size_t b = 0; b < report.budgets.size(); ++b) {
    bool first = true;
    for (const auto& arm : report.arms) {
      if (const ArmBudgetSummary* s = find_summary(report, arm.name, b)) {
        out += score_row(report, arm, *s, first);
        first = false;
      }
    }
  }
  return out + "</table>\n";
}

std::string comparisons_table_html(const StudyReport& report) {
  std::string out = "<table>\n" + header_row({"label budget", "first", "second", "metric", "difference",
                                              "95 % interval", "Wilcoxon p", "McNemar p", "Holm p", "pairs",
                                              "verdict"},
                                             4, 9);
  for (const auto& c : report.comparisons) out += comparison_row(report, c);
  return out + "</table>\n" + comparisons_note(report);
}

std::string failed_runs_table_html(const StudyReport& report) {
  std::string out = "<table>\n" + header_row({"arm", "label budget", "seed", "fold", "error"}, 2, 3);
  for (const auto& f : report.failed_runs) {
    out += "<tr>" + cell(f.arm, "label") + cell(budget_label(report.budgets[f.budget]), "label") +
           cell(std::to_string(f.seed), "num") + cell(std::to_string(f.fold), "num") + cell(f.message) + "</tr>\n";
  }
  return out + "</table>\n";
}

std::string arms_table_html(const StudyReport& report) {
  std::string out = "<table>\n" + header_row({"arm", "kind", "what it is"});
  for (const auto& arm : report.arms) {
    out += std::string(arm.kind == ArmKind::baseline ? "<tr class=\"baseline\">" : "<tr>") +
           arm_cell(report, arm.name) + cell(arm_kind_name(arm.kind)) + cell(arm.description) + "</tr>\n";
  }
  return out + "</table>\n";
}

std::string versions_table_html(const StudyVersions& v) {
  std::string out = "<table>\n" + header_row({"component", "version"});
  const std::pair<const char*, const std::string*> rows[] = {
      {"tinct", &v.tinct}, {"LibTorch", &v.libtorch}, {"GDAL", &v.gdal}, {"OpenCV", &v.opencv}};
  for (const auto& [name, version] : rows) {
    out += "<tr>" + cell(name) + cell(version->empty() ? "not recorded" : *version) + "</tr>\n";
  }
  return out + "</table>\n";
}

}  // namespace tinct
