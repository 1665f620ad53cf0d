// How each arm is drawn in every chart, the same everywhere: deep arms take the colours of
// the Okabe and Ito (2008) colour-blind-safe palette in the order of the study's arms, with
// solid lines and filled markers; baselines are grey, dashed, with hollow markers, so they
// stand apart even in greyscale. Marker shapes differ too, so colour is never the only cue.
#pragma once

#include <string>
#include <vector>

#include "study/study_report.hpp"
#include "study/svg_writer.hpp"

namespace tinct {

struct ArmStyle {
  std::string colour;
  MarkerShape marker = MarkerShape::circle;
  bool hollow = false;
  std::string dash;  // empty: solid
};

ArmStyle arm_style(const StudyReport& report, const std::string& arm);

struct LegendEntry {
  std::string label;
  ArmStyle style;
  bool line = true;  // a line sample beside the marker
};

// A vertical legend from `top_left`; returns its height.
double draw_legend(SvgWriter& svg, Point top_left, const std::vector<LegendEntry>& entries);

// Legend entries for the arms among `names`, in the study's arm order.
std::vector<LegendEntry> arm_legend(const StudyReport& report, const std::vector<std::string>& names);

}  // namespace tinct
