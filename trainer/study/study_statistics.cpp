#include "study/study_statistics.hpp"

#include <algorithm>
#include <cmath>
#include <map>
#include <optional>
#include <set>

#include "assess/holm_adjustment.hpp"
#include "assess/mcnemar.hpp"
#include "assess/paired_bootstrap.hpp"
#include "assess/paired_t_test.hpp"
#include "assess/wilcoxon_signed_rank.hpp"

namespace tinct {
namespace {

using RunKey = std::pair<int, int>;  // seed, fold

const PlannedRun& planned(const StudyPlan& plan, const CollectedRun& run) { return plan.runs[run.index]; }

RunScore score_of(const StudyPlan& plan, const CollectedRun& run) {
  const PlannedRun& p = planned(plan, run);
  RunScore s;
  s.arm = p.arm, s.budget = p.cell.budget, s.seed = p.cell.seed, s.fold = p.cell.fold;
  s.macro_f1 = run.metrics.macro_f1, s.accuracy = run.metrics.accuracy;
  s.balanced_accuracy = run.metrics.balanced_accuracy, s.kappa = run.metrics.kappa;
  s.ece_before = run.calibration.ece_before, s.ece_after = run.calibration.ece_after;
  s.test_chips = run.metrics.count;
  s.run = p.folder.string();
  return s;
}

// Runs of one arm at one budget by (seed, fold).
std::map<RunKey, const CollectedRun*> runs_of(const StudyPlan& plan, const CollectedStudy& study,
                                              const std::string& arm, std::size_t budget) {
  std::map<RunKey, const CollectedRun*> found;
  for (const CollectedRun& run : study.runs) {
    const PlannedRun& p = planned(plan, run);
    if (p.arm == arm && p.cell.budget == budget) found[{p.cell.seed, p.cell.fold}] = &run;
  }
  return found;
}

double rounded(double value) { return std::round(value * 1e9) / 1e9; }

// Resampling k clusters gives at most C(2k - 1, k) distinct means (3 for two folds): below
// five clusters a bootstrap interval is far too narrow, so the corrected t interval is used.
constexpr std::size_t kMinClusters = 5;

std::size_t cluster_count(const std::vector<int>& clusters) {
  return std::set<int>(clusters.begin(), clusters.end()).size();
}

bool few_clusters(const std::vector<int>& clusters) {
  return !clusters.empty() && cluster_count(clusters) < kMinClusters;
}

// Whole fold partitions when pairs come from several; whole folds when they share one.
std::string clusters_of(const StudyPlan& plan, const std::vector<const CollectedRun*>& runs,
                        std::vector<int>& clusters) {
  std::set<std::uint64_t> partitions;
  std::set<int> folds;
  for (const CollectedRun* run : runs) {
    partitions.insert(planned(plan, *run).partition);
    folds.insert(planned(plan, *run).cell.fold);
  }
  const bool by_partition = partitions.size() >= 2;
  if (!by_partition && folds.size() < 2) return "paired runs";
  std::map<std::uint64_t, int> id;
  for (const CollectedRun* run : runs) {
    const PlannedRun& p = planned(plan, *run);
    const std::uint64_t key = by_partition ? p.partition : static_cast<std::uint64_t>(p.cell.fold);
    clusters.push_back(id.emplace(key, static_cast<int>(id.size())).first->second);
  }
  return by_partition ? "whole fold partitions (the runs of one split seed together, as they share training chips)"
                      : "whole folds (the runs of one test fold together, as they share test chips)";
}

PairedComparison compare(const StudyPlan& plan, const CollectedStudy& study, const std::string& a,
                         const std::string& b, std::size_t budget, ComparisonDetail& detail) {
  PairedComparison c;
  c.arm_a = a, c.arm_b = b, c.budget = budget, c.metric = Metric::macro_f1;
  const auto runs_a = runs_of(plan, study, a, budget), runs_b = runs_of(plan, study, b, budget);
  std::vector<const CollectedRun*> paired_a;
  for (const auto& [key, run_a] : runs_a) {
    const auto found = runs_b.find(key);
    if (found == runs_b.end()) continue;
    const CollectedRun* run_b = found->second;
    detail.seeds.push_back(key.first), detail.folds.push_back(key.second);
    detail.differences.push_back(rounded(run_a->metrics.macro_f1 - run_b->metrics.macro_f1));
    const DiscordantCounts counts = discordant_counts(run_a->test.truth, run_a->test.predicted, run_b->test.predicted);
    detail.mcnemar_b += counts.b, detail.mcnemar_c += counts.c;
    paired_a.push_back(run_a);
  }
  c.pairs = static_cast<int>(detail.differences.size());
  if (c.pairs == 0) return c;
  const std::string unit = clusters_of(plan, paired_a, detail.clusters);
  const BootstrapOptions options{kBootstrapResamples, 0.95, kBootstrapSeed};
  const BootstrapInterval interval = detail.clusters.empty()
                                         ? paired_bootstrap(detail.differences, options)
                                         : paired_cluster_bootstrap(detail.differences, detail.clusters, options);
  c.mean_difference = interval.mean, c.low = interval.low, c.high = interval.high;
  c.resampling = unit + ", " + std::to_string(kBootstrapResamples) + " resamples, seed " +
                 std::to_string(kBootstrapSeed) + (interval.defined ? "" : " (too few to resample: no interval)");
  const WilcoxonResult wilcoxon = wilcoxon_signed_rank(detail.differences);
  if (wilcoxon.defined) c.wilcoxon_p = wilcoxon.p;
  std::optional<TTestResult> corrected;
  if (c.pairs >= 2 && study.test_train_ratio > 0) {
    corrected = corrected_resampled_t_test(detail.differences, study.test_train_ratio);
    if (corrected->defined) c.corrected_t_p = corrected->p;
  }
  if (few_clusters(detail.clusters) && corrected && corrected->defined) {
    c.low = corrected->low, c.high = corrected->high;
    c.resampling = "the Nadeau-Bengio corrected t interval: only " + std::to_string(cluster_count(detail.clusters)) +
                   " " + unit.substr(0, unit.find(" (")) + " to resample, too few for a bootstrap";
  }
  const McNemarResult mcnemar_result = mcnemar(detail.mcnemar_b, detail.mcnemar_c);
  if (mcnemar_result.defined) c.mcnemar_p = mcnemar_result.exact_p;
  return c;
}

void adjust_holm(std::vector<PairedComparison>& comparisons) {
  std::vector<double> p;
  std::vector<std::size_t> at;
  for (std::size_t i = 0; i < comparisons.size(); ++i) {
    if (comparisons[i].wilcoxon_p) p.push_back(*comparisons[i].wilcoxon_p), at.push_back(i);
  }
  if (p.size() < 2) return;
  const std::vector<double> adjusted = holm_adjust(p);
  for (std::size_t j = 0; j < at.size(); ++j) comparisons[at[j]].holm_p = adjusted[j];
}

ArmBudgetSummary summary_of(const std::vector<RunScore>& scores, const std::string& arm, std::size_t budget) {
  std::vector<double> f1, accuracy, balanced, kappa, ece_before, ece_after;
  for (const RunScore& s : scores) {
    if (s.arm != arm || s.budget != budget) continue;
    f1.push_back(s.macro_f1), accuracy.push_back(s.accuracy), balanced.push_back(s.balanced_accuracy);
    kappa.push_back(s.kappa);
    if (s.ece_before) ece_before.push_back(*s.ece_before), ece_after.push_back(*s.ece_after);
  }
  ArmBudgetSummary summary;
  summary.arm = arm, summary.budget = budget;
  if (f1.empty()) return summary;
  summary.macro_f1 = summarise(f1), summary.accuracy = summarise(accuracy);
  summary.balanced_accuracy = summarise(balanced), summary.kappa = summarise(kappa);
  if (!ece_before.empty()) summary.ece_before = summarise(ece_before), summary.ece_after = summarise(ece_after);
  return summary;
}

EnsembleDiversity diversity_of(const StudyPlan& plan, const CollectedStudy& study, const StudyArmConfig& arm,
                               std::size_t budget) {
  EnsembleDiversity d;
  d.ensemble = arm.name, d.members = arm.members, d.budget = budget;
  std::vector<std::map<RunKey, const CollectedRun*>> members;
  for (const std::string& member : arm.members) members.push_back(runs_of(plan, study, member, budget));
  std::int64_t exactly_one = 0;
  for (const auto& [key, first] : members.front()) {
    std::vector<const CollectedRun*> runs;
    for (const auto& m : members) {
      const auto found = m.find(key);
      if (found != m.end()) runs.push_back(found->second);
    }
    if (runs.size() != members.size()) continue;
    for (std::size_t i = 0; i < first->test.size(); ++i) {
      int wrong = 0;
      for (const CollectedRun* run : runs) wrong += run->test.predicted[i] != run->test.truth[i];
      exactly_one += wrong == 1;
      ++d.test_chips;
    }
  }
  d.exactly_one_wrong = d.test_chips ? static_cast<double>(exactly_one) / static_cast<double>(d.test_chips) : 0;
  return d;
}

std::vector<ReliabilityBin> reliability_bins(const std::vector<int>& truth,
                                             const std::vector<std::vector<double>>& probabilities) {
  std::vector<ReliabilityBin> bins(10);
  std::vector<double> confidence(10, 0), correct(10, 0);
  for (std::size_t b = 0; b < bins.size(); ++b) bins[b].low = b / 10.0, bins[b].high = (b + 1) / 10.0;
  for (std::size_t i = 0; i < truth.size(); ++i) {
    const auto& p = probabilities[i];
    const auto top = std::max_element(p.begin(), p.end());
    // Bins ((m-1)/10, m/10], as the ECE's; 0 falls in the first.
    const int bin = std::clamp(static_cast<int>(std::ceil(*top * 10.0)) - 1, 0, 9);
    bins[bin].count += 1;
    confidence[bin] += *top;
    correct[bin] += (top - p.begin()) == truth[i];
  }
  for (std::size_t b = 0; b < bins.size(); ++b) {
    if (bins[b].count == 0) continue;
    bins[b].mean_confidence = confidence[b] / static_cast<double>(bins[b].count);
    bins[b].accuracy = correct[b] / static_cast<double>(bins[b].count);
  }
  return bins;
}

void add_counts(std::vector<std::vector<std::int64_t>>& sum, const std::vector<std::vector<std::int64_t>>& counts) {
  if (sum.empty()) {
    sum = counts;
    return;
  }
  for (std::size_t r = 0; r < sum.size(); ++r) {
    for (std::size_t c = 0; c < sum[r].size(); ++c) sum[r][c] += counts[r][c];
  }
}

// Pooled over the runs of one arm at one budget: confusion counts and calibration.
void add_pooled(const StudyPlan& plan, const CollectedStudy& study, const std::string& arm, std::size_t budget,
                StudyStatistics& out) {
  std::vector<int> truth;
  std::vector<std::vector<double>> before, after;
  ConfusionMatrix confusion;
  confusion.arm = arm, confusion.budget = budget;
  int runs = 0;
  for (const CollectedRun& run : study.runs) {
    const PlannedRun& p = planned(plan, run);
    if (p.arm != arm || p.cell.budget != budget) continue;
    add_counts(confusion.counts, run.metrics.confusion);
    truth.insert(truth.end(), run.test.truth.begin(), run.test.truth.end());
    before.insert(before.end(), run.test.probabilities.begin(), run.test.probabilities.end());
    after.insert(after.end(), run.calibration.calibrated.begin(), run.calibration.calibrated.end());
    ++runs;
  }
  if (runs == 0) return;
  confusion.note = std::to_string(runs) + " run" + (runs > 1 ? "s" : "") + " pooled";
  out.confusions.push_back(confusion);
  ReliabilityDiagram diagram;
  diagram.arm = arm, diagram.budget = budget;
  diagram.before = reliability_bins(truth, before);
  diagram.after = reliability_bins(truth, after);
  diagram.ece_before = expected_calibration_error(truth, before);
  diagram.ece_after = expected_calibration_error(truth, after);
  out.reliability.push_back(diagram);
}

void add_curves(const StudyPlan& plan, const CollectedStudy& study, StudyStatistics& out) {
  for (const CollectedRun& run : study.runs) {
    const PlannedRun& p = planned(plan, run);
    if (run.curve.empty()) continue;
    out.curves.push_back({p.arm, p.cell.budget,
                          "seed " + std::to_string(p.cell.seed) + ", fold " + std::to_string(p.cell.fold), run.curve});
  }
}

}  // namespace

Summary summarise(const std::vector<double>& values) {
  Summary s;
  s.n = static_cast<int>(values.size());
  if (s.n == 0) return s;
  for (const double v : values) s.mean += v / s.n;
  s.low = s.high = s.mean;
  if (s.n < 2) return s;
  const TTestResult t = paired_t_test(values);
  s.mean = t.mean, s.sd = t.sd, s.low = t.low, s.high = t.high;
  return s;
}

StudyStatistics study_statistics(const StudyPlan& plan, const CollectedStudy& study) {
  StudyStatistics out;
  for (const CollectedRun& run : study.runs) out.runs.push_back(score_of(plan, run));
  const std::vector<std::string> arms = study_arm_names(plan.config);
  for (const std::string& arm : arms) {
    for (std::size_t b = 0; b < plan.config.budgets.size(); ++b) {
      const ArmBudgetSummary summary = summary_of(out.runs, arm, b);
      if (summary.macro_f1.n > 0) out.summaries.push_back(summary);
      add_pooled(plan, study, arm, b, out);
    }
  }
  for (const auto& [a, b] : plan.config.compare) {
    for (std::size_t budget = 0; budget < plan.config.budgets.size(); ++budget) {
      ComparisonDetail detail;
      const PairedComparison c = compare(plan, study, a, b, budget, detail);
      if (c.pairs == 0) continue;
      out.comparisons.push_back(c);
      out.details.push_back(detail);
    }
  }
  adjust_holm(out.comparisons);
  for (const StudyArmConfig& arm : plan.config.arms) {
    if (!arm.is_ensemble()) continue;
    for (std::size_t b = 0; b < plan.config.budgets.size(); ++b) {
      const EnsembleDiversity d = diversity_of(plan, study, arm, b);
      if (d.test_chips > 0) out.ensembles.push_back(d);
    }
  }
  add_curves(plan, study, out);
  return out;
}

}  // namespace tinct
