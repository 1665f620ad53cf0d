#include "study/report_html.hpp"

#include "study/comparison_sentence.hpp"
#include "study/confusion_heatmap.hpp"
#include "study/data_uri.hpp"
#include "study/label_efficiency_chart.hpp"
#include "study/markup_text.hpp"
#include "study/reliability_chart.hpp"
#include "study/report_style.hpp"
#include "study/report_tables.hpp"
#include "study/run_scores_chart.hpp"
#include "study/study_findings.hpp"
#include "study/training_curve_chart.hpp"
#include "util/atomic_file.hpp"

namespace tinct {

namespace {

std::string esc(const std::string& text) { return escape_markup(text); }

std::string figure(const std::string& svg, const std::string& caption) {
  return "<figure>\n" + svg + "<figcaption>" + esc(caption) + "</figcaption>\n</figure>\n";
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

std::string efficiency_section(const StudyReport& report) {
  std::string out = "<section id=\"efficiency\">\n<h2>Label efficiency</h2>\n";
  const std::string chart = label_efficiency_chart(report);
  if (chart.empty()) return out + "<p class=\"lead\">No summaries.</p>\n</section>\n";
  std::string caption = "Mean macro F1 on the test chips against labels per class; the band and whisker show "
                        "the 95 % interval of the mean";
  if (!report.summary_interval.empty()) caption += " (" + report.summary_interval + ")";
  caption += ". Pixel baselines are grey and dashed with hollow markers. Hover a marker for its values.";
  out += figure(chart, caption) + scores_table_html(report);
  out += "<p class=\"note\">Means over seeds and folds. ECE: expected calibration error (10 bins, top "
         "class), before and after temperature scaling on each run's validation chips; lower is "
         "better.</p>\n";
  return out + "</section>\n";
}

std::string comparisons_section(const StudyReport& report) {
  if (report.comparisons.empty()) return "";
  return "<section id=\"comparisons\">\n<h2>Paired comparisons</h2>\n" + comparisons_table_html(report) +
         "</section>\n";
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
  return "<section id=\"failed\">\n<h2>Failed runs</h2>\n<p class=\"lead\">These runs ended with an error and "
         "are left out of every figure and statistic above.</p>\n" +
         failed_runs_table_html(report) + "</section>\n";
}

std::string design_section(const StudyReport& report) {
  std::string out = "<section id=\"design\">\n<h2>Study design</h2>\n" + arms_table_html(report) +
                    "<p class=\"note\">Label budgets:";
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
  return "<section id=\"setup\">\n<h2>Configuration and versions</h2>\n" + versions_table_html(report.versions) +
         "<h3>Study config (resolved)</h3>\n<pre><code>" +
         esc(report.config_text.empty() ? "(not recorded)" : report.config_text) + "</code></pre>\n</section>\n";
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