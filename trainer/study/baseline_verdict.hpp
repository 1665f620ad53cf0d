// Whether the deep arms beat the best pixel baseline, per label budget, in plain words.
// The best baseline is the baseline arm with the highest mean macro F1 at that budget. An
// arm beats it only through a paired comparison whose verdict says so; every other arm is
// said plainly not to beat it (or not to be shown to, when its mean is higher).
#pragma once

#include <string>
#include <vector>

#include "study/study_report.hpp"

namespace tinct {

// One paragraph per budget that has a baseline and another arm; empty without baselines.
std::vector<std::string> baseline_sentences(const StudyReport& report);

}  // namespace tinct
