#include "study/confusion_heatmap.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>

#include "study/report_numbers.hpp"
#include "study/svg_writer.hpp"

namespace tinct {

namespace {

// ColorBrewer "Blues", 9 classes (Brewer, colorbrewer2.org; values from memory).
const int kBlues[9][3] = {{247, 251, 255}, {222, 235, 247}, {198, 219, 239}, {158, 202, 225}, {107, 174, 214},
                          {66, 146, 198},  {33, 113, 181},  {8, 81, 156},    {8, 48, 107}};

}  // namespace

std::string blue_scale(double t) {
  t = std::clamp(std::isfinite(t) ? t : 0.0, 0.0, 1.0) * 8;
  const int i = std::min(7, static_cast<int>(t));
  const double f = t - i;
  char colour[8];
  std::snprintf(colour, sizeof(colour), "#%02x%02x%02x",
                static_cast<int>(std::lround(kBlues[i][0] + f * (kBlues[i + 1][0] - kBlues[i][0]))),
                static_cast<int>(std::lround(kBlues[i][1] + f * (kBlues[i + 1][1] - kBlues[i][1]))),
                static_cast<int>(std::lround(kBlues[i][2] + f * (kBlues[i + 1][2] - kBlues[i][2]))));
  return colour;
}

std::string confusion_heatmap(const StudyReport& report, const ConfusionMatrix& matrix) {
  const auto& names = report.class_names;
  const std::size_t k = names.size();
  const double cell = std::clamp(300.0 / static_cast<double>(std::max<std::size_t>(k, 1)), 34.0, 64.0);
  double name_width = 0;
  for (const auto& name : names) name_width = std::max(name_width, estimated_text_width(name, 11));
  const double left = 34 + name_width + 8;
  const double top = 30;
  const double grid = cell * static_cast<double>(k);
  // Column names are angled at -40 degrees below the grid: they need about 0.65 of their width.
  const double below = 14 + 0.65 * name_width + 26;
  SvgWriter svg(std::max(left + grid + 16, 240.0), top + grid + below,
                "Confusion matrix of " + matrix.arm + ", " + budget_label(report.budgets[matrix.budget]));

  TextStyle title;
  title.size = 13;
  title.bold = true;
  svg.text({4, 18}, matrix.arm + ", " + budget_label(report.budgets[matrix.budget]), title);

  TextStyle name_style;
  name_style.size = 11;
  name_style.anchor = Anchor::end;
  name_style.centred_v = true;
  TextStyle count_style;
  count_style.size = cell < 44 ? 11 : 13;
  count_style.anchor = Anchor::middle;
  count_style.centred_v = true;
  for (std::size_t r = 0; r < k; ++r) {
    std::int64_t row_total = 0;
    for (const auto count : matrix.counts[r]) row_total += count;
    const double y = top + cell * static_cast<double>(r);
    svg.text({left - 6, y + cell / 2}, names[r], name_style);
    for (std::size_t c = 0; c < k; ++c) {
      const double x = left + cell * static_cast<double>(c);
      const std::int64_t count = matrix.counts[r][c];
      const double share = row_total > 0 ? static_cast<double>(count) / static_cast<double>(row_total) : 0;
      const std::string tip = "true " + names[r] + ", predicted " + names[c] + ": " +
                              std::to_string(count) + " (" + percent_text(share) + " of true " + names[r] + ")";
      const Stroke outline{"#ffffff", 1};
      svg.rect(x, y, cell, cell, blue_scale(share), tip, &outline);
      count_style.colour = share > 0.5 ? "#ffffff" : "#1a1a1a";
      count_style.bold = r == c;
      svg.text({x + cell / 2, y + cell / 2}, std::to_string(count), count_style);
    }
  }
  // The diagonal (correct predictions) framed, so it reads as the line to look along.
  for (std::size_t d = 0; d < k; ++d) {
    const Stroke frame{"#222222", 1.2};
    const double at = cell * static_cast<double>(d);
    svg.rect(left + at + 0.6, top + at + 0.6, cell - 1.2, cell - 1.2, "none", "", &frame);
  }
  name_style.rotate = -40;
  name_style.centred_v = false;
  for (std::size_t c = 0; c < k; ++c) {
    svg.text({left + cell * (static_cast<double>(c) + 0.5), top + grid + 14}, names[c], name_style);
  }
  TextStyle axis_title;
  axis_title.size = 12;
  axis_title.anchor = Anchor::middle;
  svg.text({left + grid / 2, top + grid + below - 6}, "predicted class", axis_title);
  axis_title.rotate = -90;
  svg.text({14, top + grid / 2}, "true class", axis_title);
  return svg.finish();
}

}  // namespace tinct
