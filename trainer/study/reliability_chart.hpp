// A reliability diagram: accuracy against mean top-label confidence per bin, before and
// after temperature scaling, with the diagonal of perfect calibration; below it, the share
// of test chips in each bin, since a bin of three chips says little. Points above the
// diagonal are under-confident, below it over-confident.
#pragma once

#include <string>

#include "study/study_report.hpp"

namespace tinct {

std::string reliability_chart(const StudyReport& report, const ReliabilityDiagram& diagram);

}  // namespace tinct
