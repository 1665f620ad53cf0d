#include "study/arm_style.hpp"

#include <algorithm>

namespace tinct {

namespace {

// Okabe and Ito (2008), "Color Universal Design" (from memory): blue, vermillion, bluish
// green, reddish purple, orange, sky blue, black. Yellow is left out: too pale on white.
const char* const kDeepColours[] = {"#0072B2", "#D55E00", "#009E73", "#CC79A7",
                                    "#E69F00", "#56B4E9", "#000000"};
const char* const kBaselineColours[] = {"#555555", "#8c8c8c", "#2b2b2b"};
const MarkerShape kShapes[] = {MarkerShape::circle, MarkerShape::square, MarkerShape::triangle,
                               MarkerShape::diamond, MarkerShape::triangle_down};

}  // namespace

ArmStyle arm_style(const StudyReport& report, const std::string& arm) {
  const bool baseline = is_baseline(report, arm);
  std::size_t index = 0;  // among arms of the same group (deep or baseline)
  for (const auto& other : report.arms) {
    if (other.name == arm) break;
    if ((other.kind == ArmKind::baseline) == baseline) ++index;
  }
  ArmStyle style;
  style.marker = kShapes[index % std::size(kShapes)];
  if (baseline) {
    style.colour = kBaselineColours[index % std::size(kBaselineColours)];
    style.hollow = true;
    style.dash = "6 4";
  } else {
    style.colour = kDeepColours[index % std::size(kDeepColours)];
  }
  return style;
}

double draw_legend(SvgWriter& svg, Point top_left, const std::vector<LegendEntry>& entries) {
  constexpr double kRow = 20;
  TextStyle label;
  label.size = 12;
  label.centred_v = true;
  double y = top_left.y + kRow / 2;
  for (const auto& entry : entries) {
    if (entry.line) {
      svg.line({top_left.x, y}, {top_left.x + 26, y},
               Stroke{entry.style.colour, 2, entry.style.dash});
    }
    svg.marker(entry.style.marker, {top_left.x + 13, y}, 8, entry.style.colour, entry.style.hollow);
    svg.text({top_left.x + 34, y}, entry.label, label);
    y += kRow;
  }
  return kRow * static_cast<double>(entries.size());
}

std::vector<LegendEntry> arm_legend(const StudyReport& report, const std::vector<std::string>& names) {
  std::vector<LegendEntry> entries;
  for (const auto& arm : report.arms) {
    if (std::find(names.begin(), names.end(), arm.name) == names.end()) continue;
    const std::string suffix = arm.kind == ArmKind::baseline ? " (pixel baseline)" : "";
    entries.push_back({arm.name + suffix, arm_style(report, arm.name)});
  }
  return entries;
}

}  // namespace tinct
