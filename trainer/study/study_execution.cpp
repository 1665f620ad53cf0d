#include "study/study_execution.hpp"

#include <algorithm>
#include <chrono>
#include <cstdio>
#include <functional>
#include <optional>

#include <yaml-cpp/yaml.h>

#include "finetune/run_chips.hpp"
#include "inference/saved_classifier_predictions.hpp"
#include "runs/run_folder.hpp"
#include "study/child_runs.hpp"
#include "study/prediction_table.hpp"
#include "study/study_ranks.hpp"
#include "util/atomic_file.hpp"
#include "util/error.hpp"
#include "util/log.hpp"
#include "util/progress.hpp"
#include "util/sha256.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

// Done, with the same config and its test predictions (the validation ones may be missing
// when the study stopped right after the run).
bool run_finished(const fs::path& run, const std::string& hash) {
  return RunFolder::recorded_status(run) == "done" && fs::exists(run / "config.resolved.yaml") &&
         sha256_file(run / "config.resolved.yaml") == hash && fs::exists(run / "predictions.csv");
}

bool finished_with(const fs::path& run, const std::string& hash) {
  return run_finished(run, hash) && fs::exists(run / "validation" / "predictions.csv");
}

std::string recorded_reason(const fs::path& run) {
  try {
    const YAML::Node node = YAML::LoadFile((run / "run.yaml").string());
    return node["reason"] ? node["reason"].as<std::string>() : "";
  } catch (const std::exception&) {
    return "";
  }
}

// A run the study finds finished may still have NAME.partial/ beside it, from a --force
// replacement killed with the study; the study's lock keeps every other study out.
void remove_leftover_attempt(const fs::path& run) {
  const fs::path partial = partial_folder_of(run);
  std::error_code ec;
  if (!fs::exists(partial, ec)) return;
  fs::remove_all(partial, ec);
  if (!ec) log::info("removed " + partial.string() + ", left by a replacement that did not finish");
}

Predictions as_predictions(const BaselinePredictions& p, std::size_t from, std::size_t to) {
  Predictions result;
  result.chips.assign(p.chips.begin() + from, p.chips.begin() + to);
  result.truth.assign(p.truth.begin() + from, p.truth.begin() + to);
  result.predicted.assign(p.predicted.begin() + from, p.predicted.begin() + to);
  result.probabilities.assign(p.probabilities.begin() + from, p.probabilities.begin() + to);
  return result;
}

// A pixel baseline on the cell's chips: test and validation chips predicted in one go.
void run_baseline_run(const PlannedRun& run, const fs::path& folder) {
  RunChips chips = run_chips(run.finetune);
  std::vector<ChipRef> scored = chips.split.test;
  scored.insert(scored.end(), chips.split.validation.begin(), chips.split.validation.end());
  BaselineSettings settings;
  settings.kind = run.baseline;
  settings.seed = static_cast<std::uint64_t>(run.cell.seed);
  RunFolder out(folder, {true, false});
  out.write_config(run.config_text);
  out.write_status(RunStatus::running, run.cell.seed);
  const BaselinePredictions predicted = run_baseline(chips.chips, chips.train, scored, settings);
  const std::size_t tests = chips.split.test.size();
  // A run that was there (killed, or --force) is rebuilt beside it in NAME.partial/ and swapped in.
  write_assessment(out.path(), as_predictions(predicted, 0, tests), chips.chips, chips.chips.classes());
  write_assessment(out.path() / "validation", as_predictions(predicted, tests, scored.size()), chips.chips,
                   chips.chips.classes());
  out.write_status(RunStatus::done, run.cell.seed);
  out.finish_replacement();
}

// The finished fine-tune's model on its validation chips, for temperature scaling.
void write_validation(const PlannedRun& run, const fs::path& folder) {
  RunChips chips = run_chips(run.finetune);
  const SavedClassifierPredictions predicted = predict_with_saved_classifier(
      folder / "model.pt", chips.chips, chips.split.validation, run.finetune.train.batch);
  write_assessment(folder / "validation", predicted.predictions, chips.chips, predicted.classes);
}

PredictionTable weighted_mean(const std::vector<PredictionTable>& members, const std::vector<double>& weights,
                              const std::vector<std::string>& names) {
  PredictionTable mean = members.front();
  for (std::size_t m = 1; m < members.size(); ++m) {
    if (members[m].ids != mean.ids || members[m].classes != mean.classes) {
      fail_runtime("ensemble members " + names.front() + " and " + names[m] + " were scored on different chips "
                   "or classes; an ensemble needs arms on the same label store and split");
    }
  }
  for (std::size_t i = 0; i < mean.size(); ++i) {
    for (std::size_t k = 0; k < mean.classes.size(); ++k) {
      double p = 0;
      for (std::size_t m = 0; m < members.size(); ++m) p += weights[m] * members[m].probabilities[i][k];
      mean.probabilities[i][k] = p;
    }
  }
  return mean;
}

void run_ensemble_run(const StudyPlan& plan, const PlannedRun& run, const fs::path& folder) {
  RunFolder out(folder, {true, false});
  out.write_config(run.config_text);
  out.write_status(RunStatus::running, run.cell.seed);
  for (const std::string part : {"", "validation"}) {
    std::vector<PredictionTable> members;
    std::vector<std::string> names;
    for (const std::size_t m : run.members) {
      members.push_back(read_prediction_table(plan.folder / plan.runs[m].folder / part / "predictions.csv"));
      names.push_back(plan.runs[m].arm);
    }
    write_prediction_files(out.path() / part, weighted_mean(members, run.weights, names));
  }
  out.write_status(RunStatus::done, run.cell.seed);
  out.finish_replacement();
}

// Baselines and ensembles run here, quickly; a failure is the run's, not the study's.
void run_here(const StudyPlan& plan, std::size_t index, const StudyExecution& options, std::vector<RunState>& states) {
  const PlannedRun& run = plan.runs[index];
  const fs::path folder = plan.folder / run.folder;
  RunState& state = states[index];
  if (!options.force && finished_with(folder, run.hash)) {
    remove_leftover_attempt(folder);
    state.ok = state.skipped = true;
    return;
  }
  for (const std::size_t m : run.members) {
    if (!states[m].ok) {
      state.message = "member " + plan.runs[m].arm + " failed";
      return;
    }
  }
  try {
    if (run.kind == PlannedKind::baseline) run_baseline_run(run, folder);
    if (run.kind == PlannedKind::ensemble) run_ensemble_run(plan, run, folder);
    state.ok = true;
  } catch (const std::exception& error) {
    state.message = error.what();
  }
  log::set_file(plan.folder / "log.txt");  // the run folder took the log file over
  if (!state.ok) log::warning("study: " + run_label(plan.config, run.arm, run.cell) + " failed: " + state.message);
}

ChildJob finetune_job(const StudyPlan& plan, const PlannedRun& run, int threads) {
  const fs::path folder = plan.folder / run.folder;
  const fs::path config = folder.string() + ".yaml";
  fs::create_directories(folder.parent_path());
  write_file_atomic(config, run.config_text);
  return {{"--threads", std::to_string(threads), "finetune", config.string(), "--force"}, folder.string() + ".log"};
}

// `keeps_log`: this process writes the study's log.txt (rank 0 alone).
void finish_finetune(const StudyPlan& plan, const PlannedRun& run, const ChildExit& exit, RunState& state,
                     bool keeps_log = true) {
  const fs::path folder = plan.folder / run.folder;
  if (!exit.ok()) {
    const std::string reason = recorded_reason(folder);
    state.message = (reason.empty() ? last_error_line(folder.string() + ".log") : reason) + " (" + exit.describe() +
                    "; log " + (run.folder.string() + ".log") + ")";
    return;
  }
  try {
    write_validation(run, folder);
    state.ok = true;
  } catch (const std::exception& error) {
    state.ok = false;
    state.message = std::string("applying the model to the validation chips failed: ") + error.what();
  }
  if (keeps_log) {
    log::set_file(plan.folder / "log.txt");
  } else {
    log::close_file();
  }
}

// The fine-tunes to run: those not finished before with the same config (all with --force).
// A finished one without its validation predictions gets them here.
std::vector<std::size_t> finetunes_to_run(const StudyPlan& plan, const StudyExecution& options,
                                          std::vector<RunState>& states, ExecutionCounts& counts) {
  std::vector<std::size_t> todo;
  for (std::size_t i = 0; i < plan.runs.size(); ++i) {
    const PlannedRun& run = plan.runs[i];
    if (run.kind != PlannedKind::deep) continue;
    const fs::path folder = plan.folder / run.folder;
    if (!options.force && run_finished(folder, run.hash)) {
      remove_leftover_attempt(folder);
      states[i].ok = true;
      if (!fs::exists(folder / "validation" / "predictions.csv")) finish_finetune(plan, run, ChildExit{}, states[i]);
      states[i].skipped = states[i].ok;
      ++(states[i].ok ? counts.skipped : counts.failed);
    } else {
      todo.push_back(i);
    }
  }
  if (counts.skipped) log::info("study: " + std::to_string(counts.skipped) + " fine-tunes finished before, skipped");
  return todo;
}

// What every rank must agree on before sharing runs: each run's folder and config hash.
std::string plan_fingerprint(const StudyPlan& plan) {
  std::string text;
  for (const PlannedRun& run : plan.runs) text += run.folder.string() + " " + run.hash + "\n";
  return sha256_hex(text);
}

std::string where_ran(const StudyRanks& ranks, int rank) {
  return ranks.single() ? "" : " on rank " + std::to_string(rank);
}

void log_outcome(const std::string& label, const RunState& state, const std::string& where) {
  if (state.ok) {
    log::write_file_only(log::Level::info, "study: " + label + " done" + where);
  } else {
    log::warning("study: " + label + " failed" + where + ": " + state.message);
  }
}

// Runs the fine-tunes this rank draws from `todo`, `parallel` at once.
void run_finetunes(const StudyPlan& plan, const StudyExecution& options, const std::vector<std::size_t>& todo,
                   std::vector<RunState>& states, ExecutionCounts& counts, StudyRanks& ranks) {
  if (todo.empty()) return;
  const int parallel = std::max(1, std::min(plan.config.parallel, static_cast<int>(todo.size())));
  const int threads = std::max(1, options.threads / parallel);
  log::info("study: " + std::to_string(todo.size()) + " fine-tunes to run" +
            (ranks.single() ? "" : " over " + std::to_string(ranks.world()) + " ranks") + ", " +
            std::to_string(parallel) + " at once" + (ranks.single() ? "" : " on each") + " with " +
            std::to_string(threads) + " thread" + (threads > 1 ? "s" : "") + " each");
  Progress progress("study", static_cast<std::int64_t>(todo.size()), "fine-tunes");
  std::vector<std::size_t> drawn;  // positions in `todo`, in the order this rank drew them
  std::int64_t done = 0;
  std::string last_label;
  auto show = [&] { progress.update(ranks.single() ? done : ranks.finished_runs(), last_label); };
  auto next = [&]() -> std::optional<ChildJob> {
    const std::optional<std::size_t> position = ranks.next(todo.size());
    if (!position) return std::nullopt;
    drawn.push_back(*position);
    return finetune_job(plan, plan.runs[todo[*position]], threads);
  };
  auto finished = [&](std::size_t job, const ChildExit& exit) {
    const std::size_t i = todo[drawn[job]];
    finish_finetune(plan, plan.runs[i], exit, states[i], ranks.is_writer());
    ranks.report(drawn[job], states[i].ok, states[i].message);
    ++(states[i].ok ? counts.ran : counts.failed);
    last_label = run_label(plan.config, plan.runs[i].arm, plan.runs[i].cell);
    log_outcome(last_label, states[i], where_ran(ranks, ranks.rank()));
    ++done;
    show();
  };
  std::function<void()> idle;
  if (!ranks.single()) idle = [&] { ranks.keep_alive(); if (ranks.is_writer()) show(); };
  run_children(self_executable(), next, parallel, finished, idle);
  if (ranks.is_writer() && !ranks.single()) {
    const std::vector<RunOutcome> outcomes = ranks.gather(todo.size(), show);
    for (std::size_t position = 0; position < todo.size(); ++position) {
      const RunOutcome& outcome = outcomes[position];
      if (outcome.rank == ranks.rank()) continue;  // logged as it ended
      RunState& state = states[todo[position]];
      state.ok = outcome.ok;
      state.message = outcome.message;
      ++(state.ok ? counts.ran : counts.failed);
      const PlannedRun& run = plan.runs[todo[position]];
      log_outcome(run_label(plan.config, run.arm, run.cell), state, where_ran(ranks, outcome.rank));
    }
  }
  progress.finish();
}

}  // namespace

std::vector<RunState> execute_study(const StudyPlan& plan, const StudyExecution& options, ExecutionCounts& counts,
                                    StudyRanks& ranks) {
  std::vector<RunState> states(plan.runs.size());
  std::vector<std::size_t> todo;
  if (ranks.is_writer()) todo = finetunes_to_run(plan, options, states, counts);
  todo = ranks.share_todo(todo, plan_fingerprint(plan));
  if (ranks.is_writer()) {
    for (std::size_t i = 0; i < plan.runs.size(); ++i) {
      if (plan.runs[i].kind == PlannedKind::baseline) run_here(plan, i, options, states);
    }
  }
  const auto start = std::chrono::steady_clock::now();
  run_finetunes(plan, options, todo, states, counts, ranks);
  counts.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  ranks.finish();
  if (!ranks.is_writer()) return states;
  for (std::size_t i = 0; i < plan.runs.size(); ++i) {
    if (plan.runs[i].kind == PlannedKind::ensemble) run_here(plan, i, options, states);
  }
  return states;
}

}  // namespace tinct
