// report.html: one offline file (no script, nothing fetched) showing a study's results:
// the findings in plain words first, then label efficiency, every comparison, every run,
// confusion matrices, calibration, training curves and the pretraining previews (embedded),
// the arms, config and versions, and the cautions in the footer. Charts are inline SVG.
#pragma once

#include <filesystem>
#include <string>

#include "study/study_report.hpp"

namespace tinct {

// The page; checks the report first (check_study_report).
std::string study_report_html(const StudyReport& report);

// Writes the page atomically to `file`.
void write_study_report_html(const StudyReport& report, const std::filesystem::path& file);

}  // namespace tinct
