// summary.csv and summary.json of a study: per arm and budget the mean, standard deviation
// and 95 % interval of each metric over seeds and folds; summary.json adds every run's
// scores and calibration, every comparison with the paired differences and discordant
// counts it was computed from, ensemble diversity, failed runs and warnings. Neither holds
// a time, so a resumed study writes the same bytes as an uninterrupted one.
#pragma once

#include <filesystem>

#include "study/study_statistics.hpp"

namespace tinct {

void write_study_summary(const std::filesystem::path& folder, const StudyPlan& plan, const CollectedStudy& collected,
                         const StudyStatistics& statistics, const std::string& summary_interval);

}  // namespace tinct
