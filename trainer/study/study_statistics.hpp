// The study's numbers from its collected runs: per arm and budget the mean, standard
// deviation and t interval of each metric over seeds and folds; paired comparisons (paired
// bootstrap resampling whole fold partitions or folds where runs share one, Wilcoxon,
// Nadeau-Bengio corrected t, exact McNemar on the pooled test predictions, Holm over all
// comparisons); ensemble diversity; pooled confusion matrices and reliability diagrams.
#pragma once

#include <cstdint>
#include <string>
#include <utility>
#include <vector>

#include "study/study_results.hpp"

namespace tinct {

// What a comparison was computed from, kept for summary.json (and its checks).
struct ComparisonDetail {
  std::vector<int> seeds, folds;     // of each pair
  std::vector<double> differences;   // arm_a - arm_b macro F1 per pair, rounded to 1e-9
  std::vector<int> clusters;         // bootstrap cluster of each pair (empty: pairs resampled)
  std::int64_t mcnemar_b = 0, mcnemar_c = 0;  // pooled: a right only, b right only
};

struct StudyStatistics {
  std::vector<RunScore> runs;
  std::vector<ArmBudgetSummary> summaries;
  std::vector<PairedComparison> comparisons;
  std::vector<ComparisonDetail> details;  // one per comparison
  std::vector<EnsembleDiversity> ensembles;
  std::vector<ConfusionMatrix> confusions;
  std::vector<ReliabilityDiagram> reliability;
  std::vector<TrainingCurve> curves;
};

constexpr int kBootstrapResamples = 10000;
constexpr std::uint64_t kBootstrapSeed = 0;

StudyStatistics study_statistics(const StudyPlan& plan, const CollectedStudy& collected);

// Mean, sd (n - 1) and the two-sided 95 % t interval of the mean; n = 1 gives [mean, mean].
Summary summarise(const std::vector<double>& values);

}  // namespace tinct
