#include "study/run_scores_chart.hpp"

#include <algorithm>
#include <map>
#include <utility>

#include "study/arm_style.hpp"
#include "study/chart_axes.hpp"
#include "study/report_numbers.hpp"

namespace tinct {

namespace {

using PairKey = std::pair<int, int>;  // (seed, fold)

Axis f1_axis(const StudyReport& report) {
  double low = 1, high = 0;
  for (const auto& run : report.runs) low = std::min(low, run.macro_f1), high = std::max(high, run.macro_f1);
  return score_axis("macro F1 (test chips, per run)", low, high);
}

}  // namespace

std::string run_scores_chart(const StudyReport& report, std::size_t budget) {
  std::vector<std::string> arms;
  std::map<PairKey, int> keys;  // pair key -> rank, for a fixed horizontal offset per pair
  for (const auto& arm : report.arms) {
    for (const auto& run : report.runs) {
      if (run.budget != budget || run.arm != arm.name) continue;
      if (arms.empty() || arms.back() != arm.name) arms.push_back(arm.name);
      keys[{run.seed, run.fold}] = 0;
    }
  }
  if (arms.empty()) return "";
  int rank = 0;
  for (auto& key : keys) key.second = rank++;

  Axis x = category_axis("", arms);
  std::size_t longest = 0;
  for (const auto& arm : arms) longest = std::max(longest, arm.size());
  if (longest > 7) x.tick_rotate = -30;
  const double label_room = x.tick_rotate != 0 ? 0.5 * estimated_text_width(std::string(longest, 'n'), 11) : 0;
  const PlotArea area{72, 34, std::max(150.0, 70.0 * static_cast<double>(arms.size())), 250};
  SvgWriter svg(area.right() + 20, area.bottom() + 40 + label_room,
                "Macro F1 of every run by arm, " + budget_label(report.budgets[budget]));
  ChartFrame frame(area, x, f1_axis(report));
  frame.draw(svg);
  TextStyle title;
  title.size = 13;
  title.bold = true;
  svg.text({area.left, 18}, budget_label(report.budgets[budget]), title);

  auto offset = [&](const PairKey& key) {
    const double spread = keys.size() > 1 ? static_cast<double>(keys.at(key)) / (keys.size() - 1) - 0.5 : 0;
    return 0.36 * spread;
  };
  std::map<PairKey, std::vector<Point>> paths;  // one path per pair through the arms in order
  for (std::size_t i = 0; i < arms.size(); ++i) {
    for (const auto& run : report.runs) {
      if (run.budget != budget || run.arm != arms[i]) continue;
      const PairKey key{run.seed, run.fold};
      paths[key].push_back({frame.x(static_cast<double>(i) + offset(key)), frame.y(run.macro_f1)});
    }
  }
  for (const auto& path : paths) svg.polyline(path.second, Stroke{"#9a9a9a", 1, "", 0.55});

  for (std::size_t i = 0; i < arms.size(); ++i) {
    const ArmStyle style = arm_style(report, arms[i]);
    double sum = 0;
    int n = 0;
    for (const auto& run : report.runs) {
      if (run.budget != budget || run.arm != arms[i]) continue;
      const PairKey key{run.seed, run.fold};
      const std::string tip = run.arm + ", seed " + std::to_string(run.seed) + ", fold " +
                              std::to_string(run.fold) + ": macro F1 " + fixed_text(run.macro_f1, 3) +
                              " on " + std::to_string(run.test_chips) + " test chips";
      svg.marker(style.marker, {frame.x(static_cast<double>(i) + offset(key)), frame.y(run.macro_f1)}, 7,
                 style.colour, style.hollow, tip);
      sum += run.macro_f1, ++n;
    }
    const double mean = sum / n, px = frame.x(static_cast<double>(i));
    const double half = 0.3 * (frame.x(1) - frame.x(0));
    svg.line({px - half, frame.y(mean)}, {px + half, frame.y(mean)}, Stroke{"#111111", 2.5});
  }
  return svg.finish();
}

}  // namespace tinct
