// A finished study as the report's data (study_report.hpp): arms described from their
// configs, budgets placed by the labels per class the runs saw, the statistics, the
// pretraining previews of the pretrain runs the arms start from, config and versions.
#pragma once

#include <string>

#include "study/study_statistics.hpp"

namespace tinct {

StudyReport build_study_report(const StudyPlan& plan, const CollectedStudy& collected,
                               const StudyStatistics& statistics, const std::string& config_text,
                               const std::string& summary_interval);

}  // namespace tinct
