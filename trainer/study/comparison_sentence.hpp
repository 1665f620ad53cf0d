// One paired comparison in plain words, with its interval and test, never stronger than
// the statistics allow: "beats" only when the 95 % interval excludes zero and the test
// (Holm-adjusted when given) agrees at alpha; "no evidence of a difference" when the
// interval includes zero; an interval off zero that the test does not confirm says so.
#pragma once

#include <string>

#include "study/study_report.hpp"

namespace tinct {

enum class ComparisonVerdict {
  a_better, b_better,                        // interval off zero, test agrees (or none given)
  a_ahead_unconfirmed, b_ahead_unconfirmed,  // interval off zero, test p >= alpha
  no_evidence,                               // interval includes zero
  no_pairs,
};

constexpr double kAlpha = 0.05;

ComparisonVerdict comparison_verdict(const PairedComparison& comparison, double alpha = kAlpha);

// The p value the verdict rests on: Holm-adjusted when given, else Wilcoxon's.
std::optional<double> deciding_p(const PairedComparison& comparison);

// "With 10 labels per class, pretrained beats scratch by 0.08 macro F1 (95 % interval 0.03
// to 0.13, Wilcoxon p = 0.004, 12 paired runs)."
std::string comparison_sentence(const PairedComparison& comparison, const StudyBudget& budget,
                                double alpha = kAlpha);

// The same without the budget: "pretrained beats scratch by 0.08 macro F1 (...)."
std::string comparison_clause(const PairedComparison& comparison, double alpha = kAlpha);

// A few words for tables: "pretrained better", "no evidence of a difference", ...
std::string verdict_words(const PairedComparison& comparison, double alpha = kAlpha);

std::string capitalised(std::string text);

}  // namespace tinct
