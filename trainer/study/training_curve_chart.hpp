// Training curves at one label budget, two panels side by side: training loss and
// validation macro F1 against epoch, one line per curve in its arm's colour (several runs
// of one arm drawn thinner and translucent), so a run that diverged or stopped early shows.
#pragma once

#include <cstddef>
#include <string>

#include "study/study_report.hpp"

namespace tinct {

// The complete <svg>; empty when no curve has this budget.
std::string training_curve_chart(const StudyReport& report, std::size_t budget);

}  // namespace tinct
