// A run folder runs/NAME/: config.resolved.yaml, run.yaml (status and its reason,
// times, versions, threads, BLAS, seed, config hash) and log.txt. Holding a RunFolder
// holds an exclusive lock on it (NAME/lock, util/folder_lock): a second writer is
// refused, a lock left by a killed process is taken over (noted in log.txt), and the
// lock file is removed when the RunFolder ends. Every file in it is written atomically.
#pragma once

#include <cstdint>
#include <filesystem>
#include <string>

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

  const std::filesystem::path& path() const { return path_; }
  std::filesystem::path file(const std::string& name) const { return path_ / name; }

  // Saves the resolved config and returns its SHA-256.
  std::string write_config(const std::string& resolved_yaml);
  // Writes run.yaml with the given status and, unless empty, the reason (why it failed or
  // stopped); the first call records the start, any other status than running the end.
  void write_status(RunStatus status, std::int64_t seed, const std::string& reason = "");
  // Status recorded in an existing run.yaml ("" when there is none).
  static std::string recorded_status(const std::filesystem::path& run_path);

 private:
  static std::filesystem::path created(const std::filesystem::path& path);

  std::filesystem::path path_;
  FolderLock lock_;
  std::string config_hash_;
  std::string started_;
};

std::string to_string(RunStatus status);

}  // namespace tinct
