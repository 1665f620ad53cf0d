// trainer/study: the plain-word findings and numbers of the study report. A comparison is
// called a win only when its interval excludes zero and the test agrees; an interval across
// zero reads "no evidence of a difference"; a deep arm that does not beat the best pixel
// baseline is said not to. Inputs are invented (these test wording, not statistics).
#include <catch2/catch.hpp>

#include <string>

#include "sample_study_report.hpp"
#include "study/baseline_verdict.hpp"
#include "study/comparison_sentence.hpp"
#include "study/ensemble_sentence.hpp"
#include "study/report_numbers.hpp"
#include "study/results_table.hpp"
#include "study/study_report.hpp"
#include "util/error.hpp"

using namespace tinct;

namespace {

StudyBudget per_class(double n) {
  StudyBudget budget;
  budget.value = n;
  return budget;
}

PairedComparison compared(double mean, double low, double high, std::optional<double> wilcoxon, int pairs = 12) {
  PairedComparison c;
  c.arm_a = "pretrained", c.arm_b = "scratch";
  c.mean_difference = mean, c.low = low, c.high = high;
  c.wilcoxon_p = wilcoxon;
  c.pairs = pairs;
  return c;
}

bool contains(const std::string& text, const std::string& part) { return text.find(part) != std::string::npos; }

}  // namespace

TEST_CASE("an interval above zero with a confirming test reads as a win, as in the study issue") {
  const auto c = compared(0.08, 0.03, 0.13, 0.004);
  CHECK(comparison_verdict(c) == ComparisonVerdict::a_better);
  CHECK(comparison_sentence(c, per_class(10)) ==
        "With 10 labels per class, pretrained beats scratch by 0.08 macro F1 (95 % interval 0.03 to 0.13, "
        "Wilcoxon p = 0.004, 12 paired runs).");
  CHECK(verdict_words(c) == "pretrained better");
}

TEST_CASE("an interval below zero names the other arm as the winner with a positive gap") {
  const auto c = compared(-0.08, -0.13, -0.03, 0.004);
  CHECK(comparison_verdict(c) == ComparisonVerdict::b_better);
  CHECK(comparison_sentence(c, per_class(10)) ==
        "With 10 labels per class, scratch beats pretrained by 0.08 macro F1 (95 % interval 0.03 to 0.13, "
        "Wilcoxon p = 0.004, 12 paired runs).");
}

TEST_CASE("an interval spanning zero reads as no evidence of a difference") {
  const auto c = compared(0.01, -0.02, 0.04, 0.41);
  CHECK(comparison_verdict(c) == ComparisonVerdict::no_evidence);
  CHECK(comparison_sentence(c, per_class(15)) ==
        "With 15 labels per class, there is no evidence of a difference in macro F1 between pretrained and "
        "scratch (pretrained minus scratch +0.01, 95 % interval -0.02 to 0.04, Wilcoxon p = 0.41, 12 paired runs).");
  // An interval ending exactly at zero includes zero.
  CHECK(comparison_verdict(compared(0.05, 0.0, 0.1, 0.01)) == ComparisonVerdict::no_evidence);
  CHECK(comparison_verdict(compared(-0.05, -0.1, 0.0, 0.01)) == ComparisonVerdict::no_evidence);
  CHECK(verdict_words(c) == "no evidence of a difference");
}

TEST_CASE("an interval off zero that the test does not confirm is never called a win") {
  // 5 pairs: the smallest two-sided exact Wilcoxon p is 0.0625.
  const auto c = compared(0.05, 0.01, 0.09, 0.0625, 5);
  CHECK(comparison_verdict(c) == ComparisonVerdict::a_ahead_unconfirmed);
  const std::string sentence = comparison_sentence(c, per_class(5));
  CHECK(sentence ==
        "With 5 labels per class, pretrained scores 0.05 macro F1 above scratch (95 % interval 0.01 to 0.09), "
        "but the Wilcoxon test does not confirm it (p = 0.062, 5 paired runs).");
  CHECK_FALSE(contains(sentence, "beats"));
  CHECK(verdict_words(c) == "pretrained ahead, test does not confirm");
}

TEST_CASE("Holm's adjusted p decides when it is given") {
  auto c = compared(0.05, 0.01, 0.09, 0.01);
  c.holm_p = 0.03;
  CHECK(comparison_verdict(c) == ComparisonVerdict::a_better);
  CHECK(contains(comparison_sentence(c, per_class(5)), "Wilcoxon p = 0.010, Holm-adjusted p = 0.030, 12 paired runs"));
  c.wilcoxon_p = 0.03, c.holm_p = 0.09;
  CHECK(comparison_verdict(c) == ComparisonVerdict::a_ahead_unconfirmed);
  CHECK(contains(comparison_sentence(c, per_class(5)),
                 "does not confirm it after Holm's adjustment for several comparisons (adjusted p = 0.090, "
                 "unadjusted 0.030, 12 paired runs)."));
}

TEST_CASE("without a test the interval alone decides and the sentence names no test") {
  const auto c = compared(0.08, 0.03, 0.13, std::nullopt);
  CHECK(comparison_verdict(c) == ComparisonVerdict::a_better);
  CHECK(comparison_sentence(c, per_class(10)) ==
        "With 10 labels per class, pretrained beats scratch by 0.08 macro F1 (95 % interval 0.03 to 0.13, "
        "12 paired runs).");
}

TEST_CASE("for ECE a lower value wins") {
  auto c = compared(-0.03, -0.05, -0.01, 0.002);
  c.metric = Metric::ece;
  CHECK(comparison_verdict(c) == ComparisonVerdict::a_better);
  CHECK(comparison_sentence(c, per_class(10)) ==
        "With 10 labels per class, pretrained beats scratch with a 0.03 lower ECE (95 % interval 0.01 to 0.05, "
        "Wilcoxon p = 0.002, 12 paired runs).");
  c.mean_difference = 0.03, c.low = 0.01, c.high = 0.05;
  CHECK(comparison_verdict(c) == ComparisonVerdict::b_better);
}

TEST_CASE("an interval end near zero keeps its sign in print") {
  const std::string sentence = comparison_sentence(compared(0.05, 0.004, 0.096, 0.01), per_class(10));
  CHECK(contains(sentence, "by 0.050 macro F1 (95 % interval 0.004 to 0.096"));
  CHECK(contains(comparison_sentence(compared(0.03, -0.004, 0.064, 0.2), per_class(10)), "-0.004 to 0.064"));
  CHECK(contains(comparison_sentence(compared(0.08, 0.03, 0.13, 0.004, 1), per_class(1)),
                 "With 1 label per class,"));
  CHECK(contains(comparison_sentence(compared(0.08, 0.03, 0.13, 0.004, 1), per_class(1)), "1 paired run)."));
  CHECK(comparison_sentence(compared(0, 0, 0, std::nullopt, 0), per_class(5)) ==
        "With 5 labels per class, pretrained and scratch could not be compared: no paired runs.");
}

TEST_CASE("numbers print as the report needs") {
  CHECK(fixed_text(-0.0001, 3) == "0.000");
  CHECK(signed_text(0.0123, 2) == "+0.01");
  CHECK(signed_text(-0.0123, 2) == "-0.01");
  CHECK(signed_text(0.0001, 2) == "0.00");
  CHECK(decimals_keeping_sign({0.08, 0.03, 0.13}) == 2);
  CHECK(decimals_keeping_sign({0.05, 0.004, 0.096}) == 3);
  CHECK(decimals_keeping_sign({0.0004}) == 4);
  CHECK(decimals_keeping_sign({0.00001}) == 4);  // at most 4
  CHECK(p_text(0.41) == "0.41");
  CHECK(p_text(0.004) == "0.004");
  CHECK(p_text(0.0004) == "< 0.001");
  CHECK(p_text(0.0496) == "0.0496");  // not "0.050": it is below 0.05
  CHECK(p_text(0.0504) == "0.050");
  CHECK(p_text(0.0625) == "0.062");
  CHECK(percent_text(0.183) == "18 %");
  CHECK(percent_text(0.004) == "0.4 %");
  CHECK(percent_text(0.999) == "99.9 %");
  CHECK(percent_text(1.0) == "100 %");
  CHECK(count_text(10) == "10");
  CHECK(count_text(2.5) == "2.5");
}

TEST_CASE("budgets read in words") {
  StudyBudget fraction, all;
  fraction.kind = BudgetKind::fraction, fraction.value = 0.25;
  all.kind = BudgetKind::all;
  CHECK(budget_label(per_class(10)) == "10 labels per class");
  CHECK(budget_phrase(fraction) == "with 25 % of the labels");
  CHECK(budget_short(all) == "all");
  CHECK_FALSE(labels_per_class(all));
  all.labels_per_class_seen = 62;
  CHECK(*labels_per_class(all) == 62);
}

TEST_CASE("deep arms that do not beat the best pixel baseline are said not to") {
  const StudyReport report = testing::sample_study_report("preview.png");
  const auto paragraphs = baseline_sentences(report);
  REQUIRE(paragraphs.size() == 3);
  // At 5 per class the baseline wins the one comparison and nothing else was compared.
  CHECK(paragraphs[0] ==
        "With 5 labels per class, the best pixel baseline is logistic 3x3 at 0.69 macro F1. No deep arm beats it: "
        "pretrained 0.63 (paired difference -0.05, 95 % interval -0.09 to -0.01), scratch 0.56, probe 0.60, "
        "ensemble 0.63.");
  // With all labels some deep arms average more than the baseline, which alone is no win.
  CHECK(contains(paragraphs[2], "No deep arm beats it: pretrained 0.84 (higher on average, not compared pairwise)"));
  CHECK(contains(paragraphs[2], "probe 0.75,"));
}

TEST_CASE("only a confirmed comparison lets a deep arm beat the baseline; a higher mean alone does not") {
  StudyReport report;
  report.class_names = {"wet", "dry"};
  report.arms = {{"pretrained", ArmKind::pretrained, ""}, {"scratch", ArmKind::scratch, ""},
                 {"forest", ArmKind::baseline, ""}};
  report.budgets = {per_class(5)};
  for (const auto& [arm, mean] : {std::pair<std::string, double>{"pretrained", 0.80}, {"scratch", 0.76},
                                  {"forest", 0.70}}) {
    ArmBudgetSummary s;
    s.arm = arm;
    s.macro_f1.mean = mean;
    report.summaries.push_back(s);
  }
  PairedComparison c = compared(0.10, 0.05, 0.15, 0.002);
  c.arm_b = "forest";
  report.comparisons.push_back(c);
  const auto paragraphs = baseline_sentences(report);
  REQUIRE(paragraphs.size() == 1);
  CHECK(paragraphs[0] ==
        "With 5 labels per class, the best pixel baseline is forest at 0.70 macro F1. Beats it: pretrained 0.80 "
        "(paired difference +0.10, 95 % interval 0.05 to 0.15). Does not beat it: scratch 0.76 (higher on "
        "average, not compared pairwise).");
  // An interval across zero with a higher mean is still no win.
  report.comparisons[0].low = -0.01;
  CHECK(contains(baseline_sentences(report)[0],
                 "No deep arm beats it: pretrained 0.80 (paired difference +0.10, 95 % interval -0.01 to 0.15; "
                 "higher on average, not confirmed by the paired comparison)"));
  report.arms.pop_back();  // no baseline: nothing to say
  report.summaries.pop_back();
  report.comparisons.clear();
  CHECK(baseline_sentences(report).empty());
}

TEST_CASE("an ensemble's diversity and its best member in words") {
  const StudyReport report = testing::sample_study_report("preview.png");
  const std::string sentence = ensemble_sentence(report, report.ensembles[0]);
  CHECK(contains(sentence, "With 15 labels per class, exactly one member of ensemble (pretrained and scratch) is "
                           "wrong on 18 % of 387 pooled test chips."));
  CHECK(contains(sentence, "its best member, pretrained, 0.74: there is no evidence"));
  CHECK(contains(sentence, "there is no evidence of a difference in macro F1 between ensemble and pretrained"));
}

TEST_CASE("the sample report checks out and dangling references are named") {
  StudyReport report = testing::sample_study_report("preview.png");
  CHECK_NOTHROW(check_study_report(report));
  report.comparisons[1].arm_b = "scrach";
  CHECK_THROWS_WITH(check_study_report(report), Catch::Contains("comparison 1 names arm 'scrach'"));
  report = testing::sample_study_report("preview.png");
  report.curves[0].budget = 7;
  CHECK_THROWS_WITH(check_study_report(report), Catch::Contains("training curve 0 refers to label budget 7"));
  report = testing::sample_study_report("preview.png");
  report.confusions[0].counts.pop_back();
  CHECK_THROWS_WITH(check_study_report(report), Catch::Contains("confusion matrix 0 is not 4 x 4"));
  report = testing::sample_study_report("preview.png");
  report.arms.push_back(report.arms[0]);
  CHECK_THROWS_WITH(check_study_report(report), Catch::Contains("arm 'pretrained' is listed twice"));
}

TEST_CASE("the terminal table carries scores, comparisons, findings and cautions") {
  const std::string table = study_results_table(testing::sample_study_report("preview.png"));
  CHECK(contains(table, "5 per class  pretrained "));
  CHECK(contains(table, "logistic 3x3 (baseline)"));
  CHECK(contains(table, "0.098 -> 0.040"));  // ECE before -> after
  CHECK(contains(table, "pretrained - scratch"));
  CHECK(contains(table, "no evidence of a difference"));
  CHECK(contains(table, "No deep arm beats it:"));
  CHECK(contains(table, "Failed runs (left out of every figure above)"));
  CHECK(contains(table, "Caution: These results"));
  CHECK(wrapped("aaa bbb ccc ddd", 7, "  ") == "aaa bbb\n  ccc ddd");
}
