// The study's results as plain text for the terminal at the end of a run: scores per arm
// and label budget, the paired comparisons, then the same plain-word findings as the
// report, warnings, failed runs and the cautions. Columns are aligned with spaces; lines
// of prose are wrapped at `width` characters.
#pragma once

#include <string>

#include "study/study_report.hpp"

namespace tinct {

// Checks the report first (check_study_report).
std::string study_results_table(const StudyReport& report, std::size_t width = 100);

// Words of `text` on lines of at most `width` characters, each line after the first
// starting with `indent`.
std::string wrapped(const std::string& text, std::size_t width, const std::string& indent = "");

}  // namespace tinct
