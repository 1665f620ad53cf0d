#include "study/study_findings.hpp"

#include "study/baseline_verdict.hpp"
#include "study/comparison_sentence.hpp"
#include "study/ensemble_sentence.hpp"

namespace tinct {

StudyFindings study_findings(const StudyReport& report) {
  StudyFindings findings;
  for (const auto& c : report.comparisons) {
    findings.comparisons.push_back(comparison_sentence(c, report.budgets[c.budget]));
  }
  findings.baselines = baseline_sentences(report);
  for (const auto& d : report.ensembles) findings.ensembles.push_back(ensemble_sentence(report, d));
  return findings;
}

}  // namespace tinct
