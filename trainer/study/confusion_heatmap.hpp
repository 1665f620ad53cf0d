// A confusion matrix as a heat map with counts: rows are the true class, columns the
// predicted one, each cell shaded by its share of the true class (so a rare class's
// errors show as clearly as a common one's), on a single-hue blue scale that reads in
// greyscale and for colour-blind readers; the count is printed in every cell.
#pragma once

#include <string>

#include "study/study_report.hpp"

namespace tinct {

std::string confusion_heatmap(const StudyReport& report, const ConfusionMatrix& matrix);

// The blue scale at t in [0, 1] as "#rrggbb" (ColorBrewer "Blues", 9 classes, interpolated).
std::string blue_scale(double t);

}  // namespace tinct
