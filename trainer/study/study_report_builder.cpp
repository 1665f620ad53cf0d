#include "study/study_report_builder.hpp"

#include <ctime>
#include <set>

#include "raster/gdal_session.hpp"
#include "runs/torch_runtime.hpp"
#include "util/version_info.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

std::string now_iso() {
  const std::time_t now = std::time(nullptr);
  char text[32];
  std::strftime(text, sizeof(text), "%Y-%m-%dT%H:%M:%SZ", std::gmtime(&now));
  return text;
}

const char* freeze_name(FreezePolicy policy) {
  return policy == FreezePolicy::frozen ? "frozen encoder" : policy == FreezePolicy::unfreeze_after
                                                                 ? "encoder unfrozen after a few epochs"
                                                                 : "full fine-tune";
}

// "frozen encoder, head {pool: colour, kind: linear_probe, input_bands: true} (the default)"
std::string training_of(const FinetuneConfig& c) {
  const bool probe = is_probe(c.head.kind);
  return std::string(probe ? "frozen encoder" : freeze_name(c.freeze)) + ", head " + head_summary(c.head) +
         (c.head_choice.by_default ? " (the default)" : "");
}

StudyArm deep_arm(const StudyArmConfig& arm, const FinetuneConfig& c) {
  StudyArm result;
  result.name = arm.name;
  const std::string encoder = c.init.pretrain_run.empty() ? c.init.model.encoder.name + " encoder" : "the encoder of " +
                                                                                       c.init.pretrain_run.filename().string();
  if (c.init.pretrained) {
    const bool frozen = c.freeze == FreezePolicy::frozen || is_probe(c.head.kind);
    result.kind = frozen ? ArmKind::probe : ArmKind::pretrained;
    result.description = "pretrained: " + encoder + ", " + training_of(c);
  } else {
    result.kind = ArmKind::scratch;
    result.description = "from scratch (random initial weights, architecture of " + encoder + "), " + training_of(c);
  }
  return result;
}

StudyArm ensemble_arm(const StudyArmConfig& arm) {
  std::string members;
  for (std::size_t m = 0; m < arm.members.size(); ++m) {
    members += (m ? (m + 1 == arm.members.size() ? " and " : ", ") : "") + arm.members[m];
  }
  return {arm.name, ArmKind::ensemble,
          std::string(arm.weights.empty() ? "mean" : "weighted mean") + " of the class probabilities of " + members};
}

StudyArm baseline_arm(BaselineKind kind) {
  return {to_string(kind), ArmKind::baseline,
          std::string(kind == BaselineKind::random_forest ? "random forest" : "logistic regression") +
              " on the label pixel's input bands and their 3 x 3 mean (OpenCV cv::ml)"};
}

std::vector<StudyArm> arms_of(const StudyPlan& plan) {
  std::vector<StudyArm> arms;
  for (const StudyArmConfig& arm : plan.config.arms) {
    if (arm.is_ensemble()) continue;
    for (const PlannedRun& run : plan.runs) {
      if (run.arm == arm.name) {
        arms.push_back(deep_arm(arm, run.finetune));
        break;
      }
    }
  }
  for (const StudyArmConfig& arm : plan.config.arms) {
    if (arm.is_ensemble()) arms.push_back(ensemble_arm(arm));
  }
  for (const BaselineKind kind : plan.config.baselines) arms.push_back(baseline_arm(kind));
  return arms;
}

// The last preview of each pretrain run a pretrained arm starts from.
std::vector<PreviewImage> previews_of(const StudyPlan& plan) {
  std::set<fs::path> runs;
  for (const PlannedRun& run : plan.runs) {
    if (run.kind == PlannedKind::deep && run.finetune.init.pretrained) runs.insert(run.finetune.init.pretrain_run);
  }
  std::vector<PreviewImage> previews;
  for (const fs::path& run : runs) {
    std::error_code ec;
    fs::path last;
    for (const auto& entry : fs::directory_iterator(run / "previews", ec)) {
      if (entry.path().extension() == ".png" && entry.path() > last) last = entry.path();
    }
    if (!last.empty()) previews.push_back({"pretrain run " + run.filename().string() + ", " + last.stem().string() +
                                               " (true colour | predicted)", last});
  }
  return previews;
}

}  // namespace

StudyReport build_study_report(const StudyPlan& plan, const CollectedStudy& collected, const StudyStatistics& stats,
                               const std::string& config_text, const std::string& summary_interval) {
  StudyReport report;
  report.name = plan.config.name;
  report.created = now_iso();
  report.config_text = config_text;
  report.versions = {tinct_version(), libtorch_version(), gdal_version(), opencv_version()};
  report.warnings = plan.warnings;
  report.class_names = collected.classes;
  report.arms = arms_of(plan);
  for (std::size_t b = 0; b < plan.config.budgets.size(); ++b) {
    StudyBudget budget = plan.config.budgets[b];
    budget.labels_per_class_seen = collected.labels_per_class_seen[b];
    report.budgets.push_back(budget);
  }
  report.runs = stats.runs;
  report.failed_runs = collected.failed;
  report.summary_interval = summary_interval;
  report.summaries = stats.summaries;
  report.comparisons = stats.comparisons;
  report.ensembles = stats.ensembles;
  report.confusions = stats.confusions;
  report.reliability = stats.reliability;
  report.curves = stats.curves;
  report.previews = previews_of(plan);
  return report;
}

}  // namespace tinct
