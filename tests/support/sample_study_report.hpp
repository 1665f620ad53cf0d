// A small hand-made study report for the report's tests. Every number in it is invented
// to exercise the layout (not a result of any run). Names hold markup characters on
// purpose, so escaping is tested wherever they appear.
#pragma once

#include <filesystem>

#include "study/study_report.hpp"

namespace tinct::testing {

// Six arms (two baselines, a probe, an ensemble), three budgets (5 and 15 per class, all),
// 3 seeds x 3 folds, comparisons whose intervals lie above, below and across zero.
StudyReport sample_study_report(const std::filesystem::path& preview_png);

// The least a report can hold: two arms, fraction budgets, no curves, previews or baselines.
StudyReport minimal_study_report();

}  // namespace tinct::testing
