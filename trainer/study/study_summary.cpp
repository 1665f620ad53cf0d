#include "study/study_summary.hpp"

#include "util/atomic_file.hpp"
#include "util/csv_field.hpp"

namespace tinct {
namespace {

struct NamedSummary {
  const char* name;
  const Summary* summary;
};

std::vector<NamedSummary> metrics_of(const ArmBudgetSummary& s) {
  std::vector<NamedSummary> list{{"macro_f1", &s.macro_f1},
                                 {"accuracy", &s.accuracy},
                                 {"balanced_accuracy", &s.balanced_accuracy},
                                 {"kappa", &s.kappa}};
  if (s.ece_before) list.push_back({"ece_before", &*s.ece_before}), list.push_back({"ece_after", &*s.ece_after});
  return list;
}

std::string number(double value) { return json_text(json_number(value)); }

Json summary_json(const Summary& s) {
  return Json{{"mean", json_number(s.mean)}, {"sd", json_number(s.sd)}, {"low", json_number(s.low)},
              {"high", json_number(s.high)}, {"n", s.n}};
}

Json optional_number(const std::optional<double>& value) { return value ? json_number(*value) : Json(nullptr); }

std::string summary_csv(const StudyPlan& plan, const StudyStatistics& stats) {
  const std::vector<std::string> metrics{"macro_f1", "accuracy", "balanced_accuracy", "kappa", "ece_before",
                                         "ece_after"};
  std::string text = "arm,budget,runs";
  for (const auto& m : metrics) text += "," + m + "_mean," + m + "_sd," + m + "_low," + m + "_high";
  text += "\n";
  for (const ArmBudgetSummary& s : stats.summaries) {
    text += csv_field(s.arm) + "," + budget_folder_name(plan.config.budgets[s.budget]) + "," +
            std::to_string(s.macro_f1.n);
    const auto present = metrics_of(s);
    for (const auto& m : metrics) {
      const Summary* found = nullptr;
      for (const auto& p : present) found = m == p.name ? p.summary : found;
      text += found ? "," + number(found->mean) + "," + number(found->sd) + "," + number(found->low) + "," +
                          number(found->high)
                    : ",,,,";
    }
    text += "\n";
  }
  return text;
}

Json runs_json(const StudyPlan& plan, const CollectedStudy& collected, const StudyStatistics& stats) {
  Json runs = Json::array();
  for (std::size_t i = 0; i < stats.runs.size(); ++i) {
    const RunScore& s = stats.runs[i];
    const RunCalibration& c = collected.runs[i].calibration;
    runs.push_back({{"arm", s.arm}, {"budget", budget_folder_name(plan.config.budgets[s.budget])},
                    {"seed", s.seed}, {"fold", s.fold}, {"folder", s.run},
                    {"macro_f1", json_number(s.macro_f1)}, {"accuracy", json_number(s.accuracy)},
                    {"balanced_accuracy", json_number(s.balanced_accuracy)}, {"kappa", json_number(s.kappa)},
                    {"ece_before", optional_number(s.ece_before)}, {"ece_after", optional_number(s.ece_after)},
                    {"temperature", json_number(c.fit.temperature)}, {"test_chips", s.test_chips}});
  }
  return runs;
}

Json comparisons_json(const StudyPlan& plan, const StudyStatistics& stats) {
  Json list = Json::array();
  for (std::size_t i = 0; i < stats.comparisons.size(); ++i) {
    const PairedComparison& c = stats.comparisons[i];
    const ComparisonDetail& d = stats.details[i];
    Json differences = Json::array();
    for (const double x : d.differences) differences.push_back(json_number(x));
    list.push_back({{"arm_a", c.arm_a}, {"arm_b", c.arm_b},
                    {"budget", budget_folder_name(plan.config.budgets[c.budget])}, {"metric", "macro_f1"},
                    {"pairs", c.pairs}, {"seeds", d.seeds}, {"folds", d.folds}, {"differences", differences},
                    {"mean_difference", json_number(c.mean_difference)},
                    {"bootstrap_low", json_number(c.low)}, {"bootstrap_high", json_number(c.high)},
                    {"bootstrap_clusters", d.clusters}, {"resampling", c.resampling},
                    {"wilcoxon_p", optional_number(c.wilcoxon_p)}, {"holm_p", optional_number(c.holm_p)},
                    {"corrected_t_p", optional_number(c.corrected_t_p)},
                    {"mcnemar_b", d.mcnemar_b}, {"mcnemar_c", d.mcnemar_c},
                    {"mcnemar_exact_p", optional_number(c.mcnemar_p)}});
  }
  return list;
}

Json summary_document(const StudyPlan& plan, const CollectedStudy& collected, const StudyStatistics& stats,
                      const std::string& summary_interval) {
  Json doc;
  doc["study"] = plan.config.name;
  doc["classes"] = collected.classes;
  Json budgets = Json::array();
  for (std::size_t b = 0; b < plan.config.budgets.size(); ++b) {
    budgets.push_back({{"budget", budget_folder_name(plan.config.budgets[b])},
                       {"labels_per_class_seen", json_number(collected.labels_per_class_seen[b])}});
  }
  doc["budgets"] = budgets;
  doc["arms"] = study_arm_names(plan.config);
  doc["summary_interval"] = summary_interval;
  Json summaries = Json::array();
  for (const ArmBudgetSummary& s : stats.summaries) {
    Json entry{{"arm", s.arm}, {"budget", budget_folder_name(plan.config.budgets[s.budget])}};
    for (const auto& m : metrics_of(s)) entry[m.name] = summary_json(*m.summary);
    summaries.push_back(entry);
  }
  doc["summaries"] = summaries;
  doc["comparisons"] = comparisons_json(plan, stats);
  Json ensembles = Json::array();
  for (const EnsembleDiversity& e : stats.ensembles) {
    ensembles.push_back({{"ensemble", e.ensemble}, {"members", e.members},
                         {"budget", budget_folder_name(plan.config.budgets[e.budget])},
                         {"exactly_one_wrong", json_number(e.exactly_one_wrong)}, {"test_chips", e.test_chips}});
  }
  doc["ensembles"] = ensembles;
  doc["runs"] = runs_json(plan, collected, stats);
  Json failed = Json::array();
  for (const FailedRun& f : collected.failed) {
    failed.push_back({{"arm", f.arm}, {"budget", budget_folder_name(plan.config.budgets[f.budget])},
                      {"seed", f.seed}, {"fold", f.fold}, {"message", f.message}});
  }
  doc["failed_runs"] = failed;
  doc["warnings"] = plan.warnings;
  return doc;
}

}  // namespace

void write_study_summary(const std::filesystem::path& folder, const StudyPlan& plan, const CollectedStudy& collected,
                         const StudyStatistics& statistics, const std::string& summary_interval) {
  write_file_atomic(folder / "summary.csv", summary_csv(plan, statistics));
  write_file_atomic(folder / "summary.json",
                    json_text(summary_document(plan, collected, statistics, summary_interval), 2) + "\n");
}

}  // namespace tinct
