// Per-run scores by arm at one label budget: every run's macro F1 as a dot above its arm,
// runs that share a seed and fold (the paired design) joined by thin lines from arm to arm,
// and each arm's mean as a bar. The score axis is the same for every budget, so panels
// side by side compare at a glance.
#pragma once

#include <cstddef>
#include <string>

#include "study/study_report.hpp"

namespace tinct {

// The complete <svg>; empty when no run has this budget.
std::string run_scores_chart(const StudyReport& report, std::size_t budget);

}  // namespace tinct
