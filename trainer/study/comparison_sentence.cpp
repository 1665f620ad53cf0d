#include "study/comparison_sentence.hpp"

#include <cctype>

#include "study/report_numbers.hpp"

namespace tinct {

namespace {

// The comparison seen from the side the interval favours: difference and interval positive.
struct Reading {
  std::string winner, loser;
  double difference = 0, low = 0, high = 0;
  int decimals = 2;
};

Reading reading(const PairedComparison& c, bool a_ahead) {
  Reading r;
  // For ECE a negative difference favours arm_a; flip so "ahead" reads as a positive gap.
  const double sign = higher_is_better(c.metric) == a_ahead ? 1.0 : -1.0;
  r.winner = a_ahead ? c.arm_a : c.arm_b;
  r.loser = a_ahead ? c.arm_b : c.arm_a;
  r.difference = sign * c.mean_difference;
  r.low = sign > 0 ? c.low : -c.high;
  r.high = sign > 0 ? c.high : -c.low;
  r.decimals = decimals_keeping_sign({r.difference, r.low, r.high});
  return r;
}

std::string runs_text(int pairs) {
  return std::to_string(pairs) + (pairs == 1 ? " paired run" : " paired runs");
}

std::string interval_text(double low, double high, int decimals) {
  return "95 % interval " + fixed_text(low, decimals) + " to " + fixed_text(high, decimals);
}

// "Wilcoxon p = 0.004, Holm-adjusted p = 0.012"; empty when no test was given.
std::string tests_text(const PairedComparison& c, double alpha) {
  std::string text;
  if (c.wilcoxon_p) text += "Wilcoxon p = " + p_text(*c.wilcoxon_p, alpha);
  if (c.holm_p) text += (text.empty() ? "" : ", ") + ("Holm-adjusted p = " + p_text(*c.holm_p, alpha));
  return text;
}

std::string gap_words(const PairedComparison& c, const Reading& r, bool confirmed) {
  const std::string gap = fixed_text(r.difference, r.decimals);
  const std::string metric = metric_name(c.metric);
  if (higher_is_better(c.metric)) {
    return confirmed ? "beats " + r.loser + " by " + gap + " " + metric
                     : "scores " + gap + " " + metric + " above " + r.loser;
  }
  return confirmed ? "beats " + r.loser + " with a " + gap + " lower " + metric
                   : "has a " + gap + " lower " + metric + " than " + r.loser;
}

std::string confirmed_sentence(const PairedComparison& c, const Reading& r, double alpha) {
  std::string details = interval_text(r.low, r.high, r.decimals);
  const std::string tests = tests_text(c, alpha);
  if (!tests.empty()) details += ", " + tests;
  return r.winner + " " + gap_words(c, r, true) + " (" + details + ", " + runs_text(c.pairs) + ").";
}

std::string unconfirmed_sentence(const PairedComparison& c, const Reading& r, double alpha) {
  // Only reached with a p value: Holm-adjusted, Wilcoxon's, or both.
  std::string test, after;
  if (c.holm_p) {
    after = " after Holm's adjustment for several comparisons";
    test = "adjusted p = " + p_text(*c.holm_p, alpha);
    if (c.wilcoxon_p) test += ", unadjusted " + p_text(*c.wilcoxon_p, alpha);
  } else {
    test = "p = " + p_text(*c.wilcoxon_p, alpha);
  }
  return r.winner + " " + gap_words(c, r, false) + " (" + interval_text(r.low, r.high, r.decimals) +
         "), but the Wilcoxon test does not confirm it" + after + " (" + test + ", " +
         runs_text(c.pairs) + ").";
}

std::string no_evidence_sentence(const PairedComparison& c, double alpha) {
  const int decimals = decimals_keeping_sign({c.mean_difference, c.low, c.high});
  std::string details = c.arm_a + " minus " + c.arm_b + " " + signed_text(c.mean_difference, decimals) +
                        ", " + interval_text(c.low, c.high, decimals);
  const std::string tests = tests_text(c, alpha);
  if (!tests.empty()) details += ", " + tests;
  return "there is no evidence of a difference in " + metric_name(c.metric) + " between " +
         c.arm_a + " and " + c.arm_b + " (" + details + ", " + runs_text(c.pairs) + ").";
}

}  // namespace

std::optional<double> deciding_p(const PairedComparison& comparison) {
  return comparison.holm_p ? comparison.holm_p : comparison.wilcoxon_p;
}

ComparisonVerdict comparison_verdict(const PairedComparison& c, double alpha) {
  if (c.pairs <= 0) return ComparisonVerdict::no_pairs;
  if (c.low <= 0 && c.high >= 0) return ComparisonVerdict::no_evidence;
  const bool a_ahead = (c.low > 0) == higher_is_better(c.metric);
  const std::optional<double> p = deciding_p(c);
  const bool confirmed = !p || *p < alpha;
  if (a_ahead) return confirmed ? ComparisonVerdict::a_better : ComparisonVerdict::a_ahead_unconfirmed;
  return confirmed ? ComparisonVerdict::b_better : ComparisonVerdict::b_ahead_unconfirmed;
}

std::string comparison_clause(const PairedComparison& c, double alpha) {
  switch (comparison_verdict(c, alpha)) {
    case ComparisonVerdict::a_better: return confirmed_sentence(c, reading(c, true), alpha);
    case ComparisonVerdict::b_better: return confirmed_sentence(c, reading(c, false), alpha);
    case ComparisonVerdict::a_ahead_unconfirmed: return unconfirmed_sentence(c, reading(c, true), alpha);
    case ComparisonVerdict::b_ahead_unconfirmed: return unconfirmed_sentence(c, reading(c, false), alpha);
    case ComparisonVerdict::no_evidence: return no_evidence_sentence(c, alpha);
    case ComparisonVerdict::no_pairs: return c.arm_a + " and " + c.arm_b + " could not be compared: no paired runs.";
  }
  return "";
}

std::string comparison_sentence(const PairedComparison& c, const StudyBudget& budget, double alpha) {
  return capitalised(budget_phrase(budget)) + ", " + comparison_clause(c, alpha);
}

std::string verdict_words(const PairedComparison& c, double alpha) {
  switch (comparison_verdict(c, alpha)) {
    case ComparisonVerdict::a_better: return c.arm_a + " better";
    case ComparisonVerdict::b_better: return c.arm_b + " better";
    case ComparisonVerdict::a_ahead_unconfirmed: return c.arm_a + " ahead, test does not confirm";
    case ComparisonVerdict::b_ahead_unconfirmed: return c.arm_b + " ahead, test does not confirm";
    case ComparisonVerdict::no_evidence: return "no evidence of a difference";
    case ComparisonVerdict::no_pairs: return "no paired runs";
  }
  return "";
}

std::string capitalised(std::string text) {
  if (!text.empty()) text[0] = static_cast<char>(std::toupper(static_cast<unsigned char>(text[0])));
  return text;
}

}  // namespace tinct
