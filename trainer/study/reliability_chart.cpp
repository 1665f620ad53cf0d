#include "study/reliability_chart.hpp"

#include <algorithm>

#include "study/arm_style.hpp"
#include "study/chart_axes.hpp"
#include "study/report_numbers.hpp"

namespace tinct {

namespace {

struct Series {
  const std::vector<ReliabilityBin>* bins;
  std::string name;
  ArmStyle style;
};

std::int64_t total(const std::vector<ReliabilityBin>& bins) {
  std::int64_t n = 0;
  for (const auto& bin : bins) n += bin.count;
  return n;
}

void draw_series(SvgWriter& svg, const ChartFrame& frame, const Series& series) {
  std::vector<Point> line;
  for (const auto& bin : *series.bins) {
    if (bin.count > 0) line.push_back({frame.x(bin.mean_confidence), frame.y(bin.accuracy)});
  }
  svg.polyline(line, Stroke{series.style.colour, 2, series.style.dash});
  for (const auto& bin : *series.bins) {
    if (bin.count == 0) continue;
    const std::string tip = series.name + ", confidence " + fixed_text(bin.low, 1) + " to " +
                            fixed_text(bin.high, 1) + ": accuracy " + fixed_text(bin.accuracy, 3) +
                            " at mean confidence " + fixed_text(bin.mean_confidence, 3) + ", " +
                            std::to_string(bin.count) + " chips";
    svg.marker(series.style.marker, {frame.x(bin.mean_confidence), frame.y(bin.accuracy)}, 8,
               series.style.colour, false, tip);
  }
}

// Bars of the share of chips per bin under the plot, the two series side by side, scaled
// to the tallest bar (named in the label) so small bins stay visible.
void draw_counts(SvgWriter& svg, const ChartFrame& frame, const std::vector<Series>& series, double top,
                 double height) {
  double tallest = 0;
  for (const auto& s : series) {
    const std::int64_t n = total(*s.bins);
    for (const auto& bin : *s.bins) {
      if (n > 0) tallest = std::max(tallest, static_cast<double>(bin.count) / static_cast<double>(n));
    }
  }
  svg.line({frame.area().left, top + height}, {frame.area().right(), top + height}, Stroke{"#444444", 1});
  for (std::size_t s = 0; s < series.size(); ++s) {
    const std::int64_t n = total(*series[s].bins);
    if (n == 0) continue;
    for (const auto& bin : *series[s].bins) {
      const double share = static_cast<double>(bin.count) / static_cast<double>(n);
      const double x0 = frame.x(bin.low), x1 = frame.x(bin.high);
      const double width = (x1 - x0) / 2 - 1;
      const double x = x0 + 0.5 + static_cast<double>(s) * (width + 1);
      const double bar = height * share / tallest;
      svg.rect(x, top + height - bar, width, bar, series[s].style.colour,
               series[s].name + ": " + percent_text(share) + " of chips in " + fixed_text(bin.low, 1) + " to " +
                   fixed_text(bin.high, 1));
    }
  }
  TextStyle label;
  label.size = 11;
  label.colour = "#444444";
  const std::string scale = tallest > 0 ? " (tallest bar " + percent_text(tallest) + ")" : "";
  svg.text({frame.area().left, top - 5}, "share of test chips per bin" + scale, label);
}

std::string ece_text(const std::optional<double>& ece) {
  return ece ? " (ECE " + fixed_text(*ece, 3) + ")" : "";
}

}  // namespace

std::string reliability_chart(const StudyReport& report, const ReliabilityDiagram& diagram) {
  const PlotArea area{62, 32, 250, 250};
  const double counts_top = area.bottom() + 64, counts_height = 40;
  SvgWriter svg(area.right() + 16, counts_top + counts_height + 52,
                "Reliability diagram of " + diagram.arm + ", " + budget_label(report.budgets[diagram.budget]));
  TextStyle title;
  title.size = 13;
  title.bold = true;
  svg.text({4, 18}, diagram.arm + ", " + budget_label(report.budgets[diagram.budget]), title);

  Axis x = nice_axis("mean confidence (top class)", 0, 1, 5);
  Axis y = nice_axis("accuracy (share correct)", 0, 1, 5);
  ChartFrame frame(area, x, y);
  frame.draw(svg, true);
  svg.line({frame.x(0), frame.y(0)}, {frame.x(1), frame.y(1)}, Stroke{"#9a9a9a", 1.2, "4 3"});

  // Fixed colours: vermillion before, blue after (Okabe and Ito), different shapes as well.
  std::vector<Series> series;
  series.push_back({&diagram.before, "before calibration", {"#D55E00", MarkerShape::circle, false, "5 3"}});
  series.push_back({&diagram.after, "after temperature scaling", {"#0072B2", MarkerShape::square, false, ""}});
  for (const auto& s : series) draw_series(svg, frame, s);
  draw_counts(svg, frame, series, counts_top, counts_height);

  std::vector<LegendEntry> legend = {
      {"before calibration" + ece_text(diagram.ece_before), series[0].style},
      {"after temperature scaling" + ece_text(diagram.ece_after), series[1].style},
  };
  draw_legend(svg, {area.left, counts_top + counts_height + 8}, legend);
  return svg.finish();
}

}  // namespace tinct
