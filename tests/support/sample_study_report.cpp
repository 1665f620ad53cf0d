#include "sample_study_report.hpp"

#include <cmath>

namespace tinct::testing {

namespace {

// Invented noise in [-1, 1], fixed by its arguments.
double wobble(int a, int b, int c) {
  const double x = std::sin(12.9898 * a + 78.233 * b + 37.719 * c) * 43758.5453;
  return 2 * (x - std::floor(x)) - 1;
}

Summary summarise(const std::vector<double>& values) {
  Summary s;
  s.n = static_cast<int>(values.size());
  for (const double v : values) s.mean += v / s.n;
  for (const double v : values) s.sd += (v - s.mean) * (v - s.mean) / (s.n - 1);
  s.sd = std::sqrt(s.sd);
  const double half = 2.306 * s.sd / std::sqrt(s.n);  // t(0.975, 8) for 9 runs
  s.low = s.mean - half, s.high = s.mean + half;
  return s;
}

void add_runs(StudyReport& report, const std::vector<std::vector<double>>& centres) {
  for (std::size_t a = 0; a < report.arms.size(); ++a) {
    for (std::size_t b = 0; b < report.budgets.size(); ++b) {
      std::vector<double> f1, acc, bal, kappa, ece_before, ece_after;
      for (int seed = 0; seed < 3; ++seed) {
        for (int fold = 0; fold < 3; ++fold) {
          RunScore run;
          run.arm = report.arms[a].name;
          run.budget = b;
          run.seed = seed, run.fold = fold;
          // Folds differ more than seeds, as spatial folds do; the pairing shares the fold term.
          run.macro_f1 = centres[a][b] + 0.035 * wobble(7, static_cast<int>(b), fold) +
                         0.018 * wobble(static_cast<int>(a), seed, fold);
          run.accuracy = run.macro_f1 + 0.03;
          run.balanced_accuracy = run.macro_f1 + 0.01;
          run.kappa = (run.accuracy - 0.25) / 0.75;
          if (report.arms[a].kind != ArmKind::baseline) {
            run.ece_before = 0.11 + 0.02 * wobble(static_cast<int>(a), seed, 3);
            run.ece_after = 0.04 + 0.01 * wobble(static_cast<int>(a), seed, 4);
          }
          run.test_chips = 40 + 3 * fold;
          run.run = "runs/" + run.arm + "-b" + std::to_string(b) + "-s" + std::to_string(seed) + "-f" +
                    std::to_string(fold);
          report.runs.push_back(run);
          f1.push_back(run.macro_f1), acc.push_back(run.accuracy), bal.push_back(run.balanced_accuracy);
          kappa.push_back(run.kappa);
          if (run.ece_before) ece_before.push_back(*run.ece_before), ece_after.push_back(*run.ece_after);
        }
      }
      ArmBudgetSummary s;
      s.arm = report.arms[a].name;
      s.budget = b;
      s.macro_f1 = summarise(f1), s.accuracy = summarise(acc), s.balanced_accuracy = summarise(bal);
      s.kappa = summarise(kappa);
      if (!ece_before.empty()) s.ece_before = summarise(ece_before), s.ece_after = summarise(ece_after);
      report.summaries.push_back(s);
    }
  }
}

std::vector<ReliabilityBin> bins(double overconfidence) {
  std::vector<ReliabilityBin> out;
  for (int m = 0; m < 10; ++m) {
    ReliabilityBin bin;
    bin.low = m / 10.0, bin.high = (m + 1) / 10.0;
    bin.count = m < 2 ? 0 : 4 + 9 * m;
    bin.mean_confidence = bin.low + 0.06;
    bin.accuracy = std::max(0.0, bin.mean_confidence - overconfidence * bin.mean_confidence * (1 - bin.mean_confidence) * 2);
    out.push_back(bin);
  }
  return out;
}

TrainingCurve curve(const std::string& arm, int seed, double plateau, double floor) {
  TrainingCurve c;
  c.arm = arm;
  c.budget = 0;
  c.label = "seed " + std::to_string(seed) + ", fold 0";
  const int epochs = 24 + 4 * seed;  // early stopping ends runs at different epochs
  for (int e = 1; e <= epochs; ++e) {
    CurvePoint p;
    p.epoch = e;
    p.loss = 1.35 * std::exp(-e / 7.0) + floor + 0.02 * wobble(seed, e, 1);
    p.validation_f1 = plateau * (1 - std::exp(-e / 5.0)) + 0.03 * wobble(seed, e, 2);
    c.points.push_back(p);
  }
  return c;
}

PairedComparison comparison(const std::string& a, const std::string& b, std::size_t budget, double mean,
                            double low, double high, double wilcoxon, double mcnemar, double holm) {
  PairedComparison c;
  c.arm_a = a, c.arm_b = b, c.budget = budget;
  c.mean_difference = mean, c.low = low, c.high = high;
  c.resampling = "whole folds, 2000 resamples, seed 0";
  c.wilcoxon_p = wilcoxon, c.mcnemar_p = mcnemar, c.holm_p = holm;
  c.pairs = 9;
  return c;
}

}  // namespace

StudyReport sample_study_report(const std::filesystem::path& preview_png) {
  StudyReport report;
  report.name = "Aldery marsh: pretrained vs scratch & baselines <invented numbers>";
  report.created = "2026-06-20T14:05:00Z";
  report.config_text =
      "config: study\n"
      "name: aldery-marsh  # invented example; budgets < 20 per class & 'all'\n"
      "arms:\n"
      "  - {name: pretrained, init: {from: pretrain, run: runs/aldery-pretrain}}\n"
      "  - {name: scratch, init: {from: scratch, run: runs/aldery-pretrain}}\n"
      "seeds: [0, 1, 2]\n"
      "budgets: [{per_class: 5}, {per_class: 15}, all]\n"
      "split: {method: random, allow_random: true, folds: 3}\n";
  report.versions = {"0.1.0-test", "1.13.1", "3.6.2", "4.6.0"};
  report.warnings.push_back(
      "The split is random (allow_random: true). Neighbouring chips are alike (spatial autocorrelation), "
      "so test chips next to training chips make every score look better than it will be on new ground.");
  report.class_names = {"open water", "reed & sedge", "wet meadow", "dry <grass>"};
  report.arms = {
      {"pretrained", ArmKind::pretrained, "compact encoder from runs/aldery-pretrain, full fine-tune"},
      {"scratch", ArmKind::scratch, "same architecture, random initial weights"},
      {"probe", ArmKind::probe, "linear probe on the frozen pretrained encoder"},
      {"ensemble", ArmKind::ensemble, "mean class probabilities of pretrained and scratch"},
      {"logistic 3x3", ArmKind::baseline, "logistic regression on the 3 x 3 mean of the input bands"},
      {"random forest", ArmKind::baseline, "random forest on the label pixel's input bands"},
  };
  StudyBudget five, fifteen, all;
  five.value = 5, fifteen.value = 15;
  all.kind = BudgetKind::all;
  all.labels_per_class_seen = 62;
  report.budgets = {five, fifteen, all};
  add_runs(report, {{0.66, 0.74, 0.83}, {0.58, 0.69, 0.82}, {0.62, 0.68, 0.74},
                    {0.65, 0.75, 0.84}, {0.71, 0.76, 0.80}, {0.63, 0.72, 0.79}});
  report.failed_runs.push_back({"scratch", 2, 2, 1, "finetune: validation loss is not finite at epoch 7"});
  report.summary_interval = "t interval over the 9 runs (3 seeds x 3 folds)";

  report.comparisons = {
      comparison("pretrained", "scratch", 0, 0.081, 0.034, 0.129, 0.0039, 0.012, 0.0156),
      comparison("pretrained", "scratch", 1, 0.048, 0.006, 0.090, 0.027, 0.21, 0.081),
      comparison("pretrained", "scratch", 2, 0.012, -0.021, 0.044, 0.43, 0.52, 0.86),
      comparison("pretrained", "logistic 3x3", 0, -0.052, -0.094, -0.011, 0.0078, 0.03, 0.0234),
      comparison("ensemble", "pretrained", 1, 0.009, -0.004, 0.023, 0.30, 0.64, 0.9),
  };
  EnsembleDiversity diversity;
  diversity.ensemble = "ensemble";
  diversity.members = {"pretrained", "scratch"};
  diversity.budget = 1;
  diversity.exactly_one_wrong = 0.183;
  diversity.test_chips = 387;
  report.ensembles.push_back(diversity);

  report.confusions.push_back({"pretrained", 0, "9 runs pooled (invented counts)",
                               {{88, 6, 4, 2}, {9, 61, 22, 3}, {3, 18, 70, 14}, {1, 2, 16, 83}}});
  report.confusions.push_back({"logistic 3x3", 0, "9 runs pooled (invented counts)",
                               {{92, 4, 3, 1}, {6, 70, 16, 3}, {2, 13, 79, 11}, {1, 3, 10, 88}}});
  report.reliability.push_back({"pretrained", 0, bins(0.45), bins(0.08), 0.124, 0.041});
  report.reliability.push_back({"scratch", 0, bins(0.6), bins(0.12), 0.162, 0.052});

  for (int seed = 0; seed < 3; ++seed) {
    report.curves.push_back(curve("pretrained", seed, 0.68, 0.12));
    report.curves.push_back(curve("scratch", seed, 0.6, 0.3));
  }
  report.previews.push_back({"pretrain run aldery-pretrain, step 2000 (invented scene)", preview_png});
  report.previews.push_back({"a preview whose file is missing", preview_png.parent_path() / "missing.png"});
  return report;
}

StudyReport minimal_study_report() {
  StudyReport report;
  report.name = "minimal";
  report.class_names = {"wet", "dry"};
  report.arms = {{"pretrained", ArmKind::pretrained, ""}, {"scratch", ArmKind::scratch, ""}};
  StudyBudget quarter, all;
  quarter.kind = BudgetKind::fraction, quarter.value = 0.25;
  all.kind = BudgetKind::all;
  report.budgets = {quarter, all};
  for (std::size_t b = 0; b < 2; ++b) {
    for (const auto& arm : report.arms) {
      RunScore run;
      run.arm = arm.name, run.budget = b, run.macro_f1 = 0.7 + 0.05 * b;
      run.accuracy = run.balanced_accuracy = run.macro_f1, run.test_chips = 12;
      report.runs.push_back(run);
      ArmBudgetSummary s;
      s.arm = arm.name, s.budget = b;
      s.macro_f1 = {run.macro_f1, 0, run.macro_f1, run.macro_f1, 1};
      s.accuracy = s.balanced_accuracy = s.kappa = s.macro_f1;
      report.summaries.push_back(s);
    }
  }
  return report;
}

}  // namespace tinct::testing
