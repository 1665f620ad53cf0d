#include "study/study_job.hpp"

#include <cstdio>
#include <fstream>
#include <iostream>
#include <sstream>

#include "distributed/rank_board.hpp"
#include "runs/torch_runtime.hpp"
#include "study/report_html.hpp"
#include "study/results_table.hpp"
#include "study/study_report_builder.hpp"
#include "study/study_ranks.hpp"
#include "study/study_summary.hpp"
#include "training/parallel_launch.hpp"
#include "util/atomic_file.hpp"
#include "util/error.hpp"
#include "util/folder_lock.hpp"
#include "util/log.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

const char* const kSummaryInterval =
    "mean with the two-sided 95 % t interval over the runs of each arm and budget (seeds x folds)";

std::string file_text(const fs::path& file) {
  std::ifstream in(file);
  std::stringstream text;
  text << in.rdbuf();
  return text.str();
}

std::string matrix_line(const StudyPlan& plan) {
  const StudyConfig& c = plan.config;
  std::size_t deep = 0;
  for (const PlannedRun& run : plan.runs) deep += run.kind == PlannedKind::deep;
  return "study " + c.name + ": " + std::to_string(c.arms.size()) + " arms and " + std::to_string(c.baselines.size()) +
         " baselines x " + std::to_string(c.budgets.size()) + " budgets x " + std::to_string(c.seeds.size()) +
         " seeds x " + std::to_string(c.folds.size()) + " folds: " + std::to_string(deep) + " fine-tunes, " +
         std::to_string(plan.runs.size() - deep) + " baseline and ensemble runs";
}

std::string throughput(const ExecutionCounts& counts) {
  char text[160];
  std::snprintf(text, sizeof(text), "study: %d fine-tunes ran in %.1f s (%.2f per minute), %d skipped, %d failed",
                counts.ran, counts.seconds, counts.seconds > 0 ? 60.0 * counts.ran / counts.seconds : 0.0,
                counts.skipped, counts.failed);
  return text;
}

// This process's place among the ranks the environment describes (alone: one process);
// its compute threads are set for it.
StudyRanks join_study_ranks(const StudyConfig& config, const StudyOptions& options) {
  const Rendezvous place = take_place(config.port, options.world, options.threads);
  if (place.single()) return StudyRanks();
  return StudyRanks(std::make_unique<RankBoard>(place, config.timeout_seconds));
}

// A rank other than 0: runs the fine-tunes it draws; rank 0 learns of a failure here.
void run_study_rank(const StudyPlan& plan, const StudyOptions& options, StudyRanks& ranks) {
  ExecutionCounts counts;
  try {
    execute_study(plan, {options.force, threads_in_use()}, counts, ranks);
  } catch (const std::exception& error) {
    ranks.abandon(error.what());
    throw;
  }
  log::info("study: " + ranks.rank_label() + " ran " + std::to_string(counts.ran) + " fine-tunes");
}

}  // namespace

void run_study(const fs::path& config_file, const StudyOptions& options) {
  const ConfigNode root = ConfigNode::load(config_file);
  root.choice("config", {"study"});
  const StudyConfig config = read_study_config(root);
  root.finish();
  const StudyPlan plan = plan_study(config);
  StudyRanks ranks = join_study_ranks(config, options);
  if (!ranks.is_writer()) {
    run_study_rank(plan, options, ranks);
    return;
  }

  fs::create_directories(plan.folder);
  FolderLock lock(plan.folder, plan.folder / "lock", "wait for the other study to finish");
  log::set_file(plan.folder / "log.txt");
  remove_orphaned_temporaries(plan.folder);  // of a study killed mid-write
  log::info(matrix_line(plan));
  for (const std::string& warning : plan.warnings) log::warning(warning);

  ExecutionCounts counts;
  const std::vector<RunState> states = execute_study(plan, {options.force, threads_in_use()}, counts, ranks);
  log::info(throughput(counts));
  const CollectedStudy collected = collect_study(plan, states);
  const StudyStatistics statistics = study_statistics(plan, collected);
  write_study_summary(plan.folder, plan, collected, statistics, kSummaryInterval);
  const StudyReport report = build_study_report(plan, collected, statistics, file_text(config_file), kSummaryInterval);
  write_study_report_html(report, plan.folder / "report.html");
  std::cout << study_results_table(report) << std::flush;
  log::info("study: wrote summary.csv, summary.json and report.html in " + plan.folder.string());
  if (!collected.failed.empty()) {
    fail_runtime("study: " + std::to_string(collected.failed.size()) + " of " + std::to_string(plan.runs.size()) +
                 " runs failed (listed above and in report.html); the results use the others. Fix the cause and "
                 "run the study again: finished runs are kept");
  }
}

}  // namespace tinct
