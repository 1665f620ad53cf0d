// The tables of report.html as HTML fragments: scores per arm and budget, the paired
// comparisons with a note on how they were made, failed runs, the arms, and versions. Names
// stay on one line, figures are right-aligned, each arm carries its chart colour as a swatch.
#pragma once

#include <string>

#include "study/study_report.hpp"

namespace tinct {

std::string scores_table_html(const StudyReport& report);
std::string comparisons_table_html(const StudyReport& report);  // the table and its note
std::string failed_runs_table_html(const StudyReport& report);
std::string arms_table_html(const StudyReport& report);
std::string versions_table_html(const StudyVersions& versions);

}  // namespace tinct
