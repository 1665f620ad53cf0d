// A run folder runs/NAME/: config.resolved.yaml, run.yaml (status and its reason,
// times, versions, threads, BLAS, seed, config hash) and log.txt. Holding a RunFolder
// holds an exclusive lock on it (NAME/lock, util/folder_lock): a second writer is
// refused, a lock left by a killed process is taken over (noted in log.txt), and the
// lock file is removed when the RunFolder ends. Every file in it is written atomically.
// --force on a run that exists builds the new run beside it in NAME.partial/ (locked too)
// and swaps it in at the end (finish_replacement): the old run moves to NAME.previous/,
// the new one to NAME/, then the old one is deleted; so a kill leaves a whole run at NAME/
// (the old one) or NAME.previous/ (put back by the next opening).
#pragma once

#include <cstdint>
#include <filesystem>
#include <memory>
#include <string>
#include <vector>

#include "runs/config_changes.hpp"
#include <yaml-cpp/yaml.h>

#include "util/folder_lock.hpp"

namespace tinct {

// stopped: ended early on request (--stop-after); interrupted: by SIGINT or SIGTERM. Both resumable.
enum class RunStatus { running, done, stopped, interrupted, failed };

struct RunOpening {
  bool force = false;   // start over in a run folder that exists
  bool resume = false;  // continue the run that exists
};

class RunFolder {
 public:
  // Creates or reopens `path`. Fails if another process holds the run, or if the
  // folder holds a run and neither force nor resume is set.
  RunFolder(std::filesystem::path path, RunOpening opening);
  ~RunFolder();
  RunFolder(const RunFolder&) = delete;
  RunFolder& operator=(const RunFolder&) = delete;

  // Where this run's files go: NAME/, or NAME.partial/ while it replaces a run.
  const std::filesystem::path& path() const { return path_; }
  const std::filesystem::path& target() const { return target_; }
  bool replacing() const { return staging_lock_ != nullptr; }
  std::filesystem::path file(const std::string& name) const { return path_ / name; }

  // Saves the resolved config and returns its SHA-256.
  std::string write_config(const std::string& resolved_yaml);
  // Writes run.yaml with the given status and, unless empty, the reason (why it failed or
  // stopped); the first call records the start, any other status than running the end.
  void write_status(RunStatus status, std::int64_t seed, const std::string& reason = "");
  // Keys of the config changed on this --resume (the learning rate): run.yaml lists them
  // under resumed_with_changes, after those of earlier resumes, from the next write_status.
  void record_resume_changes(const std::vector<ConfigChange>& changes);
  // A finding of the run kept in run.yaml under `key` from the next write_status on (e.g. the
  // probe's inner cross-validation), so the record says how the run chose what it chose.
  void record(const std::string& key, const YAML::Node& value) { records_[key] = YAML::Clone(value); }
  // The arithmetic of the training step, written into run.yaml from then on (precision:
  // requested, used, why); never set: no such entry.
  void set_precision(const std::string& requested, const std::string& used, const std::string& why);
  // Status recorded in an existing run.yaml ("" when there is none).
  static std::string recorded_status(const std::filesystem::path& run_path);

  // A replacing run that ended (done, stopped or interrupted) takes the old one's place.
  void finish_replacement();
  // The run never started (a usage error found after opening): what it wrote goes, and
  // a run it reopened gets its previous run.yaml back.
  void undo_start();

 private:
  struct ResumeChange {
    ConfigChange change;
    std::string resumed;  // UTC time of the resume
  };
  static std::filesystem::path created(const std::filesystem::path& path);
  static std::vector<ResumeChange> recorded_resume_changes(const std::string& run_yaml);
  void start_replacement();
  void remove_leftover_attempt() const;

  std::filesystem::path target_;
  bool existed_ = false;         // the folder was there before this opening
  std::string previous_run_yaml_;
  std::string previous_config_;  // config.resolved.yaml of a run reopened by --resume
  std::filesystem::path path_;
  FolderLock lock_;
  std::unique_ptr<FolderLock> staging_lock_;
  std::string config_hash_;
  std::string started_;
  std::vector<ResumeChange> resume_changes_;  // of every resume, oldest first
  YAML::Node records_{YAML::NodeType::Map};
  std::string precision_requested_, precision_used_, precision_why_;
};

std::string to_string(RunStatus status);

}  // namespace tinct
