#include "study/label_efficiency_chart.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "study/arm_style.hpp"
#include "study/chart_axes.hpp"
#include "study/report_numbers.hpp"

namespace tinct {

namespace {

struct BudgetPositions {
  std::vector<double> x;  // per budget
  Axis axis;
};

BudgetPositions budget_positions(const StudyReport& report) {
  BudgetPositions positions;
  bool numeric = !report.budgets.empty();
  for (const auto& budget : report.budgets) numeric = numeric && labels_per_class(budget);
  std::vector<std::string> names;
  for (const auto& budget : report.budgets) names.push_back(budget_short(budget));
  if (!numeric) {
    positions.axis = category_axis("label budget", names);
    for (std::size_t i = 0; i < names.size(); ++i) positions.x.push_back(static_cast<double>(i));
    return positions;
  }
  double low = std::numeric_limits<double>::max(), high = 0;
  for (std::size_t i = 0; i < report.budgets.size(); ++i) {
    const double value = *labels_per_class(report.budgets[i]);
    positions.x.push_back(value);
    low = std::min(low, value), high = std::max(high, value);
    std::string label = names[i];
    if (report.budgets[i].kind != BudgetKind::per_class) label += " (" + count_text(std::round(value)) + ")";
    positions.axis.ticks.push_back({value, label});
  }
  positions.axis.log = high / low >= 3;
  positions.axis.title = positions.axis.log ? "labels per class (log scale)" : "labels per class";
  // Pad so the end points do not sit on the frame.
  positions.axis.low = positions.axis.log ? low / 1.35 : low - 0.08 * std::max(high - low, 1.0);
  positions.axis.high = positions.axis.log ? high * 1.35 : high + 0.08 * std::max(high - low, 1.0);
  return positions;
}

Axis f1_axis(const StudyReport& report) {
  double low = 1, high = 0;
  for (const auto& s : report.summaries) {
    low = std::min({low, s.macro_f1.low, s.macro_f1.mean});
    high = std::max({high, s.macro_f1.high, s.macro_f1.mean});
  }
  return score_axis("macro F1 (test chips, mean of runs)", low, high);
}

std::string tooltip(const StudyReport& report, const ArmBudgetSummary& s) {
  return s.arm + ", " + budget_label(report.budgets[s.budget]) + ": macro F1 " +
         fixed_text(s.macro_f1.mean, 3) + " (95 % interval " + fixed_text(s.macro_f1.low, 3) +
         " to " + fixed_text(s.macro_f1.high, 3) + ", " + std::to_string(s.macro_f1.n) + " runs)";
}

void draw_arm(SvgWriter& svg, const ChartFrame& frame, const StudyReport& report,
              const std::vector<double>& x, const StudyArm& arm) {
  std::vector<const ArmBudgetSummary*> points;
  for (std::size_t b = 0; b < report.budgets.size(); ++b) {
    if (const ArmBudgetSummary* s = find_summary(report, arm.name, b)) points.push_back(s);
  }
  if (points.empty()) return;
  const ArmStyle style = arm_style(report, arm.name);
  const bool baseline = arm.kind == ArmKind::baseline;
  std::vector<Point> band, line;
  for (const auto* s : points) band.push_back({frame.x(x[s->budget]), frame.y(s->macro_f1.high)});
  for (auto it = points.rbegin(); it != points.rend(); ++it) {
    band.push_back({frame.x(x[(*it)->budget]), frame.y((*it)->macro_f1.low)});
  }
  for (const auto* s : points) line.push_back({frame.x(x[s->budget]), frame.y(s->macro_f1.mean)});
  svg.area(band, style.colour, baseline ? 0.07 : 0.13);
  // Whiskers too: a band of one point, or a band hidden under another, still shows.
  for (const auto* s : points) {
    const double px = frame.x(x[s->budget]);
    svg.line({px, frame.y(s->macro_f1.low)}, {px, frame.y(s->macro_f1.high)},
             Stroke{style.colour, 1, "", 0.45});
  }
  svg.polyline(line, Stroke{style.colour, baseline ? 1.8 : 2.4, style.dash});
  for (const auto* s : points) {
    svg.marker(style.marker, {frame.x(x[s->budget]), frame.y(s->macro_f1.mean)}, 9, style.colour,
               style.hollow, tooltip(report, *s));
  }
}

}  // namespace

std::string label_efficiency_chart(const StudyReport& report) {
  if (report.summaries.empty()) return "";
  const BudgetPositions positions = budget_positions(report);
  std::vector<std::string> shown;
  for (const auto& s : report.summaries) shown.push_back(s.arm);
  const std::vector<LegendEntry> legend = arm_legend(report, shown);
  double legend_width = 0;
  for (const auto& entry : legend) legend_width = std::max(legend_width, estimated_text_width(entry.label, 12));

  const PlotArea area{72, 16, 600, 320};
  SvgWriter svg(area.right() + 40 + 34 + legend_width + 10, area.bottom() + 52,
                "Label efficiency: macro F1 against labels per class, one line per arm");
  ChartFrame frame(area, positions.axis, f1_axis(report));
  frame.draw(svg, true);
  // Baselines first, so the deep arms are drawn over them.
  for (const bool baselines : {true, false}) {
    for (const auto& arm : report.arms) {
      if ((arm.kind == ArmKind::baseline) == baselines) draw_arm(svg, frame, report, positions.x, arm);
    }
  }
  draw_legend(svg, {area.right() + 40, area.top}, legend);
  return svg.finish();
}

}  // namespace tinct
