// The life of one training run in its folder, the same for every loop: the run folder is
// opened (locked), the resolved config saved with its hash (on --resume it must equal the
// one the run started with, but for the learning rate), run.yaml says running,
// SIGINT/SIGTERM are caught; at the end run.yaml and log.txt say how it ended (done, stopped, interrupted or failed) and why.
// The one place that decides which process writes: rank 0 of a data-parallel job; the
// others open nothing in the folder and only read its checkpoints.
#pragma once

#include <cstdint>
#include <filesystem>
#include <functional>
#include <memory>
#include <string>

#include "runs/run_folder.hpp"
#include "training/precision.hpp"
#include "training/stop_signals.hpp"

namespace tinct {

class ProcessGroup;

// The config keys --resume lets change: "train.lr, train.min_lr, train.warmup, ..."
std::string rate_keys_text();

struct RunStart {
  std::string command;  // "pretrain", "finetune": begins log lines and messages
  std::filesystem::path output;
  bool force = false;   // start over in an existing run folder
  bool resume = false;  // continue the run in the folder
  std::string resolved_config;
  std::uint64_t seed = 0;
  ProcessGroup* group = nullptr;  // a data-parallel job's processes; null: one process
  PrecisionChoice precision{"", "", ""};  // the step's arithmetic for run.yaml; requested "": none
};

struct RunOutcome {
  RunStatus status = RunStatus::done;  // done, stopped or interrupted
  std::string reason;                  // why it ended before its end; "" when done
};

class RunLifecycle {
 public:
  // Fails (usage) on --resume with a config other than the run's, before writing anything;
  // only the learning-rate keys (rate_keys_text()) may differ, and run.yaml records them.
  explicit RunLifecycle(const RunStart& start);

  // The open run folder: the writer's only (is_writer()).
  RunFolder& folder();
  // A file in the run folder, for every process (checkpoints to resume from). The writer's
  // folder may be a replacement built beside the old run (--force), so ask it first.
  std::filesystem::path file(const std::string& name) const;
  const std::filesystem::path& path() const;
  const std::string& config_hash() const { return config_hash_; }
  // Whether this process writes checkpoints and artefacts: rank 0 of a data-parallel job.
  bool is_writer() const;

  // A stop signal has come (to any process of a job, which all agree on it, so call it at
  // the same points on every process): finish the step, write a checkpoint, return
  // interrupted_after().
  bool stop_requested() const;
  // "interrupted by SIGTERM after step 12; --resume continues"
  RunOutcome interrupted_after(const std::string& point) const;

  // Runs the loop. Its outcome, or `failed` with the error's message, goes into run.yaml
  // (status, reason, end time) and log.txt; errors are rethrown. An interrupted run is then
  // reported as a runtime error (exit 1), so scripts do not carry on as if it were done.
  // A usage error (exit 2) undoes the start instead: the run never began. A run replacing
  // another (--force) takes its place when it ends, unless it failed.
  void execute(const std::function<RunOutcome()>& body);

 private:
  void record(RunStatus status, const std::string& reason);
  void record_failure(const std::exception& error);

  RunStart start_;
  std::unique_ptr<RunFolder> folder_;  // the writer's
  std::string config_hash_;
  StopSignals signals_;
};

}  // namespace tinct
