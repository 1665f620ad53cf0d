// What a study's report shows, as plain data: `tinct study` fills it after its runs and
// statistics; report.html, the plain-word sentences and the terminal table only read it.
// Nothing here computes a statistic. Entries name their arm by its name and their label
// budget by its index in `budgets`; check_study_report() finds dangling references.
#pragma once

#include <cstddef>
#include <cstdint>
#include <filesystem>
#include <optional>
#include <string>
#include <vector>

namespace tinct {

enum class ArmKind { pretrained, scratch, baseline, probe, ensemble };
enum class BudgetKind { per_class, fraction, all };
// Every metric is higher-is-better except ECE.
enum class Metric { macro_f1, accuracy, balanced_accuracy, kappa, ece };

struct StudyArm {
  std::string name;  // as in the study config
  ArmKind kind = ArmKind::pretrained;
  std::string description;  // one line: init, head, freeze policy, inputs
};

struct StudyBudget {
  BudgetKind kind = BudgetKind::per_class;
  double value = 0;  // labels per class, or a fraction in (0, 1]; unused for `all`
  // Mean training labels per class the runs at this budget saw (0: unknown). Places
  // fraction and `all` budgets on the label-efficiency chart's labels-per-class axis.
  double labels_per_class_seen = 0;
};

struct RunScore {  // one fine-tune (or baseline fit) on its test chips
  std::string arm;
  std::size_t budget = 0;
  int seed = 0, fold = 0;
  double macro_f1 = 0, accuracy = 0, balanced_accuracy = 0, kappa = 0;
  std::optional<double> ece_before, ece_after;  // before / after temperature scaling
  std::int64_t test_chips = 0;
  std::string run;  // run folder, relative to the study folder
};

struct FailedRun {
  std::string arm;
  std::size_t budget = 0;
  int seed = 0, fold = 0;
  std::string message;  // the error the run ended with
};

struct Summary {  // one metric over the runs of one arm at one budget
  double mean = 0, sd = 0;
  double low = 0, high = 0;  // 95 % interval of the mean (StudyReport::summary_interval says how)
  int n = 0;                 // runs
};

struct ArmBudgetSummary {
  std::string arm;
  std::size_t budget = 0;
  Summary macro_f1, accuracy, balanced_accuracy, kappa;
  std::optional<Summary> ece_before, ece_after;
};

struct PairedComparison {  // arm_a against arm_b over runs paired by seed and fold
  std::string arm_a, arm_b;
  std::size_t budget = 0;
  Metric metric = Metric::macro_f1;
  double mean_difference = 0;  // mean over pairs of (a - b)
  double low = 0, high = 0;    // 95 % paired bootstrap interval of mean_difference
  std::string resampling;      // what was resampled, e.g. "whole folds, 2000 resamples, seed 0"
  std::optional<double> wilcoxon_p;     // signed-rank over the paired runs, two-sided
  std::optional<double> mcnemar_p;      // exact, on the pooled test predictions
  std::optional<double> holm_p;         // wilcoxon_p adjusted by Holm over the study's comparisons
  std::optional<double> corrected_t_p;  // Nadeau and Bengio (2003) resampled t, if computed
  int pairs = 0;
};

struct EnsembleDiversity {  // do the members of an ensemble arm err on different chips?
  std::string ensemble;               // an arm of kind ensemble
  std::vector<std::string> members;   // its member arms
  std::size_t budget = 0;
  double exactly_one_wrong = 0;  // share of the pooled test chips exactly one member gets wrong
  std::int64_t test_chips = 0;   // pooled over the runs
};

struct ConfusionMatrix {
  std::string arm;
  std::size_t budget = 0;
  std::string note;  // what is pooled, e.g. "15 runs pooled"
  std::vector<std::vector<std::int64_t>> counts;  // (K, K): rows true, columns predicted
};

struct ReliabilityBin {
  double low = 0, high = 0;  // confidence range of the bin
  std::int64_t count = 0;
  double mean_confidence = 0, accuracy = 0;  // meaningful when count > 0
};

struct ReliabilityDiagram {  // top-label confidence against accuracy, pooled test chips
  std::string arm;
  std::size_t budget = 0;
  std::vector<ReliabilityBin> before, after;  // before / after temperature scaling
  std::optional<double> ece_before, ece_after;
};

struct CurvePoint {
  int epoch = 0;
  double loss = 0;                        // training loss
  std::optional<double> validation_f1;    // validation macro F1
};

struct TrainingCurve {
  std::string arm;
  std::size_t budget = 0;
  std::string label;  // which run, e.g. "seed 1, fold 0", or "mean of 15 runs"
  std::vector<CurvePoint> points;
};

struct PreviewImage {  // a pretraining preview PNG: true colour | predicted, per row
  std::string caption;          // e.g. the pretrain run and step
  std::filesystem::path png;    // embedded into report.html as a data URI
};

struct StudyVersions {
  std::string tinct, libtorch, gdal, opencv;
};

extern const char* const kStudyCautions;

struct StudyReport {
  std::string name;
  std::string created;      // when the report was written, ISO 8601
  std::string config_text;  // the resolved study config, YAML
  StudyVersions versions;
  std::vector<std::string> warnings;  // e.g. random split: spatial autocorrelation
  std::vector<std::string> class_names;
  std::vector<StudyArm> arms;
  std::vector<StudyBudget> budgets;  // in increasing order of labels
  std::vector<RunScore> runs;
  std::vector<FailedRun> failed_runs;
  std::string summary_interval;  // how Summary::low/high were made, e.g. "t interval over runs"
  std::vector<ArmBudgetSummary> summaries;
  std::vector<PairedComparison> comparisons;
  std::vector<EnsembleDiversity> ensembles;
  std::vector<ConfusionMatrix> confusions;
  std::vector<ReliabilityDiagram> reliability;
  std::vector<TrainingCurve> curves;
  std::vector<PreviewImage> previews;
  std::string cautions = kStudyCautions;
};

// Throws tinct::Error (runtime) naming the first entry that refers to an unknown arm or
// budget, a confusion matrix that is not (K, K), or a duplicate arm name.
void check_study_report(const StudyReport& report);

const StudyArm* find_arm(const StudyReport& report, const std::string& name);
const ArmBudgetSummary* find_summary(const StudyReport& report, const std::string& arm,
                                     std::size_t budget);
bool is_baseline(const StudyReport& report, const std::string& arm);

std::string arm_kind_name(ArmKind kind);        // "pretrained", "scratch", ...
std::string metric_name(Metric metric);          // "macro F1", "ECE", ...
bool higher_is_better(Metric metric);
std::string budget_short(const StudyBudget& budget);   // "10", "25 %", "all"
std::string budget_label(const StudyBudget& budget);   // "10 labels per class", "25 % of labels"
std::string budget_phrase(const StudyBudget& budget);  // "with 10 labels per class"
// Position on a labels-per-class axis; nullopt when unknown.
std::optional<double> labels_per_class(const StudyBudget& budget);

}  // namespace tinct
