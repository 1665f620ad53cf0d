// The label-efficiency chart: mean macro F1 against labels per class, one line per arm with
// its 95 % interval as a band, baselines dashed and grey. Budgets sit on a log axis when
// every budget has a labels-per-class figure (fraction and `all` budgets through
// StudyBudget::labels_per_class_seen), else evenly spaced in the study's order.
#pragma once

#include <string>

#include "study/study_report.hpp"

namespace tinct {

// The complete <svg>; empty when the report has no summaries.
std::string label_efficiency_chart(const StudyReport& report);

}  // namespace tinct
