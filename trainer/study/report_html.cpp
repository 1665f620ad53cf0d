#include "study/report_html.hpp"

#include <set>

#include "study/arm_style.hpp"
#include "study/comparison_sentence.hpp"
#include "study/confusion_heatmap.hpp"
#include "study/data_uri.hpp"
#include "study/label_efficiency_chart.hpp"
#include "study/markup_text.hpp"
#include "study/reliability_chart.hpp"
#include "study/report_numbers.hpp"
#include "study/report_style.hpp"
#include "study/run_scores_chart.hpp"
#include "study/study_findings.hpp"
#include "study/training_curve_chart.hpp"
#include "util/atomic_file.hpp"

namespace tinct {

namespace {

std::string esc(const std::string& text) { return escape_markup(text); }

// Cell classes: "num" right-aligned figures, "label" names kept on one line, "" free text.
std::string cell(const std::string& text, const std::string& kind = "") {
  return (kind.empty() ? std::string("<td>") : "<td class=\"" + kind + "\">") + esc(text) + "</td>";
}

// Headers aligned like their columns: the columns from first_number to last_number hold figures.
std::string header_cells(const std::vector<std::string>& names, std::size_t first_number,
                         std::size_t last_number = 99) {
  std::string out = "<tr>";
  for (std::size_t i = 0; i < names.size(); ++i) {
    const bool number = i >= first_number && i <= last_number;
    out += std::string(number ? "<th class=\"num\">" : "<th>") + esc(names[i]) + "</th>";
  }
  return out + "</tr>\n";
}

std::string figure(const std::string& svg, const std::string& caption) {
  return "<figure>\n" + svg + "<figcaption>" + esc(caption) + "</figcaption>\n</figure>\n";
}

std::string swatch(const StudyReport& report, const std::string& arm) {
  const ArmStyle style = arm_style(report, arm);
  return "<span class=\"swatch" + std::string(style.hollow ? " hollow" : "") + "\" style=\"background:" +
         esc(style.colour) + ";border-color:" + esc(style.colour) + "\"></span>";
}

std::string page_header(const StudyReport& report) {
  std::string meta = std::to_string(report.runs.size()) + " runs";
  if (!report.failed_runs.empty()) meta += " (" + std::to_string(report.failed_runs.size()) + " failed)";
  meta += " | " + std::to_string(report.arms.size()) + " arms | " + std::to_string(report.budgets.size()) +
          " label budgets | " + std::to_string(report.class_names.size()) + " classes";
  if (!report.created.empty()) meta += " | written " + report.created;
  if (!report.versions.tinct.empty()) meta += " | tinct " + report.versions.tinct;
  return "<header class=\"top\"><div class=\"wrap\">\n<p class=\"kicker\">tinct study report</p>\n<h1>" +
         esc(report.name) + "</h1>\n<p class=\"meta\">" + esc(meta) + "</p>\n</div></header>\n";
}

std::string contents(const std::vector<std::pair<std::string, std::string>>& sections) {
  std::string out = "<nav class=\"contents\"><div class=\"wrap\">";
  for (const auto& [id, title] : sections) out += "<a href=\"#" + id + "\">" + esc(title) + "</a> ";
  return out + "</div></nav>\n";
}

std::string warnings_box(const StudyReport& report) {
  std::string out;
  for (const auto& warning : report.warnings) {
    out += "<div class=\"warning\"><strong>Warning:</strong> " + esc(warning) + "</div>\n";
  }
  return out;
}

std::string verdict_tag(const PairedComparison& c) {
  switch (comparison_verdict(c)) {
    case ComparisonVerdict::a_better:
    case ComparisonVerdict::b_better: return "<span class=\"tag better\">difference shown</span>";
    case ComparisonVerdict::a_ahead_unconfirmed:
    case ComparisonVerdict::b_ahead_unconfirmed: return "<span class=\"tag unconfirmed\">not confirmed</span>";
    case ComparisonVerdict::no_evidence: return "<span class=\"tag none\">no evidence</span>";
    case ComparisonVerdict::no_pairs: return "<span class=\"tag none\">not compared</span>";
  }
  return "";
}

std::string findings_section(const StudyReport& report) {
  const StudyFindings findings = study_findings(report);
  std::string out = "<section id=\"findings\">\n<h2>Findings</h2>\n";
  if (!findings.comparisons.empty()) {
    out += "<h3>Paired comparisons</h3>\n<ul class=\"findings\">\n";
    for (std::size_t i = 0; i < findings.comparisons.size(); ++i) {
      out += "<li>" + verdict_tag(report.comparisons[i]) + esc(findings.comparisons[i]) + "</li>\n";
    }
    out += "</ul>\n";
  }
  if (!findings.baselines.empty()) {
    out += "<h3>Against the pixel baselines</h3>\n<ul class=\"findings\">\n";
    for (const auto& paragraph : findings.baselines) out += "<li>" + esc(paragraph) + "</li>\n";
    out += "</ul>\n";
  }
  if (!findings.ensembles.empty()) {
    out += "<h3>Ensembles</h3>\n<ul class=\"findings\">\n";
    for (const auto& sentence : findings.ensembles) out += "<li>" + esc(sentence) + "</li>\n";
    out += "</ul>\n";
  }
  if (findings.comparisons.empty() && findings.baselines.empty() && findings.ensembles.empty()) {
    out += "<p class=\"lead\">The study made no paired comparisons.</p>\n";
  }
  out += "<p class=\"note\">How to read these: an arm is said to beat another only when the 95 % interval "
         "of the paired difference lies wholly on one side of zero and the Wilcoxon signed-rank test "
         "(Holm-adjusted when several comparisons are made) agrees at p &lt; 0.05. \"No evidence of a "
         "difference\" means the interval includes zero: the study cannot tell the arms apart, which "
         "is not the same as showing that they are equal. Scores are on held-out test chips.</p>\n";
  return out + "</section>\n";
}

std::string summary_rows(const StudyReport& report) {
  std::string out;
  for (std::size_t b = 0; b < report.budgets.size(); ++b) {
    bool first = true;
    for (const auto& arm : report.arms) {
      const ArmBudgetSummary* s = find_summary(report, arm.name, b);
      if (!s) continue;
      std::string classes = arm.kind == ArmKind::baseline ? "baseline" : "";
      if (first && b > 0) classes += classes.empty() ? "group" : " group";
      out += "<tr" + (classes.empty() ? std::string() : " class=\"" + classes + "\"") + ">";
      out += cell(first ? budget_label(report.budgets[b]) : "", "label");
      out += "<td class=\"label\">" + swatch(report, arm.name) + esc(arm.name) + "</td>" +
             cell(arm_kind_name(arm.kind));
      out += cell(std::to_string(s->macro_f1.n), "num") + cell(fixed_text(s->macro_f1.mean, 3), "num") +
             cell(fixed_text(s->macro_f1.sd, 3), "num") +
             cell(fixed_text(s->macro_f1.low, 3) + " to " + fixed_text(s->macro_f1.high, 3), "num") +
             cell(fixed_text(s->accuracy.mean, 3), "num") + cell(fixed_text(s->balanced_accuracy.mean, 3), "num") +
             cell(fixed_text(s->kappa.mean, 3), "num") +
             cell(s->ece_before ? fixed_text(s->ece_before->mean, 3) : "-", "num") +
             cell(s->ece_after ? fixed_text(s->ece_after->mean, 3) : "-", "num") + "</tr>\n";
      first = false;
    }
  }
  return out;
}

std::string efficiency_section(const StudyReport& report) {
  std::string out = "<section id=\"efficiency\">\n<h2>Label efficiency</h2>\n";
  const std::string chart = label_efficiency_chart(report);
  if (chart.empty()) return out + "<p class=\"lead\">No summaries.</p>\n</section>\n";
  std::string caption = "Mean macro F1 on the test chips against labels per class; the band and whisker show "
                        "the 95 % interval of the mean";
  if (!report.summary_interval.empty()) caption += " (" + report.summary_interval + ")";
  caption += ". Pixel baselines are grey and dashed with hollow markers. Hover a marker for its values.";
  out += figure(chart, caption);
  out += "<table>\n" +
         header_cells({"label budget", "arm", "kind", "runs", "macro F1", "sd", "95 % interval", "accuracy",
                       "balanced accuracy", "kappa", "ECE before", "ECE after"},
                      3) +
         summary_rows(report) + "</table>\n";
  out += "<p class=\"note\">Means over seeds and folds. ECE: expected calibration error (10 bins, top "
         "class), before and after temperature scaling on each run's validation chips; lower is "
         "better.</p>\n";
  return out + "</section>\n";
}

std::string optional_p(const std::optional<double>& p) { return p ? p_text(*p) : "-"; }

std::string comparisons_section(const StudyReport& report) {
  if (report.comparisons.empty()) return "";
  std::string out = "<section id=\"comparisons\">\n<h2>Paired comparisons</h2>\n<table>\n" +
                    header_cells({"label budget", "first", "second", "metric", "difference", "95 % interval",
                                  "Wilcoxon p", "McNemar p", "Holm p", "pairs", "verdict"},
                                 4, 9);
  std::set<std::string> resamplings;
  bool corrected_t = false;
  for (const auto& c : report.comparisons) {
    const int decimals = std::max(3, decimals_keeping_sign({c.mean_difference, c.low, c.high}));
    out += "<tr>" + cell(budget_label(report.budgets[c.budget]), "label") + cell(c.arm_a, "label") +
           cell(c.arm_b, "label") + cell(metric_name(c.metric), "label") + cell(signed_text(c.mean_difference, decimals), "num") +
           cell(fixed_text(c.low, decimals) + " to " + fixed_text(c.high, decimals), "num") +
           cell(optional_p(c.wilcoxon_p), "num") + cell(optional_p(c.mcnemar_p), "num") +
           cell(optional_p(c.holm_p), "num") + cell(std::to_string(c.pairs), "num") + cell(verdict_words(c), "verdict") +
           "</tr>\n";
    if (!c.resampling.empty()) resamplings.insert(c.resampling);
    corrected_t = corrected_t || c.corrected_t_p.has_value();
  }
  out += "</table>\n<p class=\"note\">Runs are paired by seed and fold: both arms saw the same training, "
         "validation and test chips. Difference: first arm minus second, mean over the pairs. Interval: paired "
         "bootstrap of the mean difference";
  std::string list;
  for (const auto& r : resamplings) list += (list.empty() ? "" : "; ") + r;
  if (!list.empty()) out += ", resampling " + esc(list);
  out += ". Wilcoxon: signed-rank test over the paired runs, two-sided. McNemar: exact test on the "
         "pooled test predictions. Holm: the Wilcoxon p values adjusted for the number of comparisons.";
  if (corrected_t) {
    out += " Corrected resampled t (Nadeau and Bengio 2003):";
    for (const auto& c : report.comparisons) {
      if (!c.corrected_t_p) continue;
      out += " " + esc(c.arm_a + " vs " + c.arm_b + ", " + budget_short(report.budgets[c.budget])) + ": p = " +
             esc(p_text(*c.corrected_t_p)) + ";";
    }
  }
  return out + "</p>\n</section>\n";
}

std::string runs_section(const StudyReport& report) {
  if (report.runs.empty()) return "";
  std::string out = "<section id=\"runs\">\n<h2>Scores of every run</h2>\n<p class=\"lead\">Each marker is one "
                    "run; grey lines join runs with the same seed and fold across arms (the pairs the "
                    "comparisons use); the black bar is the arm's mean.</p>\n<div class=\"panels\">\n";
  for (std::size_t b = 0; b < report.budgets.size(); ++b) {
    const std::string chart = run_scores_chart(report, b);
    if (!chart.empty()) out += "<figure>\n" + chart + "</figure>\n";
  }
  return out + "</div>\n</section>\n";
}

std::string confusion_section(const StudyReport& report) {
  if (report.confusions.empty()) return "";
  std::string out = "<section id=\"confusion\">\n<h2>Confusion matrices</h2>\n<p class=\"lead\">Counts of test "
                    "chips, rows by true class and columns by predicted class; the shade is the share of the "
                    "row, so each row's errors read the same whatever the class's size. The framed diagonal "
                    "holds the correct predictions.</p>\n<div class=\"panels\">\n";
  for (const auto& matrix : report.confusions) {
    out += figure(confusion_heatmap(report, matrix), matrix.note);
  }
  return out + "</div>\n</section>\n";
}

std::string calibration_section(const StudyReport& report) {
  if (report.reliability.empty()) return "";
  std::string out = "<section id=\"calibration\">\n<h2>Calibration</h2>\n<p class=\"lead\">Accuracy against "
                    "confidence of the top class, in 10 bins of the pooled test chips, before and after "
                    "temperature scaling (fitted on each run's validation chips). On the dashed diagonal the "
                    "confidence is honest; below it the classifier is over-confident. The bars show where the "
                    "chips lie.</p>\n<div class=\"panels\">\n";
  for (const auto& diagram : report.reliability) out += "<figure>\n" + reliability_chart(report, diagram) + "</figure>\n";
  return out + "</div>\n</section>\n";
}

std::string curves_section(const StudyReport& report) {
  std::string charts;
  for (std::size_t b = 0; b < report.budgets.size(); ++b) {
    const std::string chart = training_curve_chart(report, b);
    if (!chart.empty()) charts += "<figure>\n" + chart + "</figure>\n";
  }
  if (charts.empty()) return "";
  return "<section id=\"curves\">\n<h2>Training curves</h2>\n<p class=\"lead\">Training loss and validation macro "
         "F1 per epoch. A curve that climbs then falls, or stops early, shows where early stopping "
         "chose the model.</p>\n" +
         charts + "</section>\n";
}

std::string previews_section(const StudyReport& report) {
  if (report.previews.empty()) return "";
  std::string out = "<section id=\"previews\">\n<h2>Pretraining previews</h2>\n<p class=\"lead\">Validation chips "
                    "of the pretraining: true colour on the left, the colour the model predicts from the input "
                    "bands on the right.</p>\n<div class=\"panels\">\n";
  for (const auto& preview : report.previews) {
    const auto png = embed_png(preview.png);
    if (!png) {
      out += "<figure><p class=\"warning\">Preview not found or not a PNG: " + esc(preview.png.filename().string()) +
             "</p><figcaption>" + esc(preview.caption) + "</figcaption></figure>\n";
      continue;
    }
    // Small previews are shown at twice their size, pixels kept sharp.
    const int scale = png->width < 360 ? 2 : 1;
    const std::string width = std::to_string(png->width * scale), height = std::to_string(png->height * scale);
    out += "<figure class=\"preview\" style=\"width:" + width + "px;max-width:100%\">\n"
           "<div class=\"preview-head\"><span>true colour</span><span>predicted</span></div>\n"
           "<img src=\"" + png->uri + "\" width=\"" + width + "\" height=\"" + height +
           "\" alt=\"true colour | predicted: " + esc(preview.caption) + "\">\n<figcaption>true colour | predicted: " +
           esc(preview.caption) + "</figcaption>\n</figure>\n";
  }
  return out + "</div>\n</section>\n";
}

std::string failed_section(const StudyReport& report) {
  if (report.failed_runs.empty()) return "";
  std::string out = "<section id=\"failed\">\n<h2>Failed runs</h2>\n<p class=\"lead\">These runs ended with an "
                    "error and are left out of every figure and statistic above.</p>\n<table>\n" +
                    header_cells({"arm", "label budget", "seed", "fold", "error"}, 2, 3);
  for (const auto& f : report.failed_runs) {
    out += "<tr>" + cell(f.arm, "label") + cell(budget_label(report.budgets[f.budget]), "label") +
           cell(std::to_string(f.seed), "num") + cell(std::to_string(f.fold), "num") + cell(f.message) + "</tr>\n";
  }
  return out + "</table>\n</section>\n";
}

std::string design_section(const StudyReport& report) {
  std::string out = "<section id=\"design\">\n<h2>Study design</h2>\n<table>\n" +
                    header_cells({"arm", "kind", "what it is"}, 99);
  for (const auto& arm : report.arms) {
    out += std::string(arm.kind == ArmKind::baseline ? "<tr class=\"baseline\">" : "<tr>") + "<td class=\"label\">" +
           swatch(report, arm.name) + esc(arm.name) + "</td>" + cell(arm_kind_name(arm.kind)) +
           cell(arm.description) + "</tr>\n";
  }
  out += "</table>\n<p class=\"note\">Label budgets:";
  for (std::size_t b = 0; b < report.budgets.size(); ++b) {
    out += std::string(b ? ";" : "") + " " + esc(budget_label(report.budgets[b]));
  }
  out += ". Classes:";
  for (std::size_t k = 0; k < report.class_names.size(); ++k) {
    out += std::string(k ? "," : "") + " " + esc(report.class_names[k]);
  }
  return out + ".</p>\n</section>\n";
}

std::string setup_section(const StudyReport& report) {
  const auto& v = report.versions;
  std::string out = "<section id=\"setup\">\n<h2>Configuration and versions</h2>\n<table>\n" +
                    header_cells({"component", "version"}, 99);
  const std::pair<const char*, const std::string*> rows[] = {
      {"tinct", &v.tinct}, {"LibTorch", &v.libtorch}, {"GDAL", &v.gdal}, {"OpenCV", &v.opencv}};
  for (const auto& [name, version] : rows) {
    out += "<tr>" + cell(name) + cell(version->empty() ? "not recorded" : *version) + "</tr>\n";
  }
  out += "</table>\n<h3>Study config (resolved)</h3>\n<pre><code>" +
         esc(report.config_text.empty() ? "(not recorded)" : report.config_text) + "</code></pre>\n";
  return out + "</section>\n";
}

std::string footer(const StudyReport& report) {
  return "<footer><div class=\"wrap\">\n<h2>Cautions</h2>\n<p>" + esc(report.cautions) +
         "</p>\n</div></footer>\n";
}

}  // namespace

std::string study_report_html(const StudyReport& report) {
  check_study_report(report);
  std::vector<std::pair<std::string, std::string>> toc = {{"findings", "Findings"},
                                                          {"efficiency", "Label efficiency"}};
  if (!report.comparisons.empty()) toc.emplace_back("comparisons", "Comparisons");
  if (!report.runs.empty()) toc.emplace_back("runs", "Every run");
  if (!report.confusions.empty()) toc.emplace_back("confusion", "Confusion matrices");
  if (!report.reliability.empty()) toc.emplace_back("calibration", "Calibration");
  if (!report.curves.empty()) toc.emplace_back("curves", "Training curves");
  if (!report.previews.empty()) toc.emplace_back("previews", "Previews");
  if (!report.failed_runs.empty()) toc.emplace_back("failed", "Failed runs");
  toc.emplace_back("design", "Design");
  toc.emplace_back("setup", "Config and versions");

  std::string page = "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n"
                     "<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n<title>" +
                     esc("tinct study: " + report.name) + "</title>\n<style>" + kReportStyle +
                     "</style>\n</head>\n<body>\n";
  page += page_header(report) + contents(toc) + "<main class=\"wrap\">\n" + warnings_box(report);
  page += findings_section(report) + efficiency_section(report) + comparisons_section(report) +
          runs_section(report) + confusion_section(report) + calibration_section(report) +
          curves_section(report) + previews_section(report) + failed_section(report) +
          design_section(report) + setup_section(report);
  page += "</main>\n" + footer(report) + "</body>\n</html>\n";
  return page;
}

void write_study_report_html(const StudyReport& report, const std::filesystem::path& file) {
  write_file_atomic(file, study_report_html(report));
}

}  // namespace tinct
