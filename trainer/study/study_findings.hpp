// The report's findings in order, as plain sentences shared by report.html and the
// terminal table: every paired comparison, the verdict against the best pixel baseline,
// and each ensemble's diversity.
#pragma once

#include <string>
#include <vector>

#include "study/study_report.hpp"

namespace tinct {

struct StudyFindings {
  std::vector<std::string> comparisons;  // one sentence per PairedComparison, in order
  std::vector<std::string> baselines;    // one paragraph per budget with a baseline
  std::vector<std::string> ensembles;    // one per EnsembleDiversity
};

StudyFindings study_findings(const StudyReport& report);

}  // namespace tinct
