#include "study/training_curve_chart.hpp"

#include <algorithm>
#include <map>

#include "study/arm_style.hpp"
#include "study/chart_axes.hpp"
#include "study/report_numbers.hpp"

namespace tinct {

namespace {

struct Extent {
  int last_epoch = 1;
  double loss_high = 0, f1_low = 1, f1_high = 0;
  bool any_f1 = false;
};

Extent extent(const std::vector<const TrainingCurve*>& curves) {
  Extent e;
  for (const auto* curve : curves) {
    for (const auto& p : curve->points) {
      e.last_epoch = std::max(e.last_epoch, p.epoch);
      e.loss_high = std::max(e.loss_high, p.loss);
      if (p.validation_f1) {
        e.any_f1 = true;
        e.f1_low = std::min(e.f1_low, *p.validation_f1), e.f1_high = std::max(e.f1_high, *p.validation_f1);
      }
    }
  }
  return e;
}

// Draws one panel; `value` picks the quantity (nullopt: no point at this epoch).
template <typename Value>
void draw_panel(SvgWriter& svg, const ChartFrame& frame, const StudyReport& report,
                const std::vector<const TrainingCurve*>& curves, const std::map<std::string, int>& per_arm,
                Value value) {
  frame.draw(svg);
  for (const auto* curve : curves) {
    const ArmStyle style = arm_style(report, curve->arm);
    const bool crowded = per_arm.at(curve->arm) > 1;
    std::vector<Point> line;
    for (const auto& p : curve->points) {
      if (const auto v = value(p)) line.push_back({frame.x(p.epoch), frame.y(*v)});
    }
    svg.polyline(line, Stroke{style.colour, crowded ? 1.2 : 2, style.dash, crowded ? 0.6 : 1});
  }
}

}  // namespace

std::string training_curve_chart(const StudyReport& report, std::size_t budget) {
  std::vector<const TrainingCurve*> curves;
  std::map<std::string, int> per_arm;
  std::vector<std::string> arms;
  for (const auto& curve : report.curves) {
    if (curve.budget != budget || curve.points.empty()) continue;
    curves.push_back(&curve);
    if (per_arm[curve.arm]++ == 0) arms.push_back(curve.arm);
  }
  if (curves.empty()) return "";
  const Extent e = extent(curves);
  const std::vector<LegendEntry> legend = arm_legend(report, arms);
  double legend_width = 0;
  for (const auto& entry : legend) legend_width = std::max(legend_width, estimated_text_width(entry.label, 12));

  const PlotArea loss_area{72, 34, 330, 230};
  const PlotArea f1_area{loss_area.right() + 96, 34, 330, 230};
  SvgWriter svg(f1_area.right() + 32 + 34 + legend_width + 10, loss_area.bottom() + 52,
                "Training curves, " + budget_label(report.budgets[budget]));
  TextStyle title;
  title.size = 13;
  title.bold = true;
  svg.text({loss_area.left, 18}, budget_label(report.budgets[budget]) + ": training loss", title);
  svg.text({f1_area.left, 18}, "validation macro F1", title);

  const Axis epochs = nice_axis("epoch", 0, e.last_epoch, 6);
  ChartFrame loss(loss_area, epochs, nice_axis("training loss (cross-entropy)", 0, e.loss_high, 5));
  draw_panel(svg, loss, report, curves, per_arm,
             [](const CurvePoint& p) { return std::optional<double>(p.loss); });
  ChartFrame f1(f1_area, epochs,
                score_axis("macro F1 (validation chips)", e.any_f1 ? e.f1_low : 0, e.any_f1 ? e.f1_high : 1));
  draw_panel(svg, f1, report, curves, per_arm, [](const CurvePoint& p) { return p.validation_f1; });
  draw_legend(svg, {f1_area.right() + 32, f1_area.top}, legend);
  return svg.finish();
}

}  // namespace tinct
