// An exclusive lock on an output folder (a store, a run) so that a second tinct
// process cannot write into it at the same time. The lock is flock(2) on a lock
// file inside or beside the folder, holding the holder's pid for messages; the
// kernel drops it when the holder dies, so a file left by a killed process is
// stale and taken over. Released (and the lock file removed) on destruction.
#pragma once

#include <sys/types.h>

#include <filesystem>
#include <string>

namespace tinct {

class FolderLock {
 public:
  // Locks `folder` through `lock_file` (created with its parent folders). A second
  // holder is refused (runtime error naming the folder, the lock file and the
  // holder's pid). `hint` ends that message: what the user can do instead.
  FolderLock(std::filesystem::path folder, std::filesystem::path lock_file,
             const std::string& hint = "wait for it to finish or write elsewhere");
  ~FolderLock();
  FolderLock(const FolderLock&) = delete;
  FolderLock& operator=(const FolderLock&) = delete;

  // Removes the lock file, then drops the lock; safe to call twice.
  void release();
  // The holder renamed the folder (and the lock file with it): later messages and
  // release() use the new names. The lock itself is unchanged (flock follows the file).
  void moved(std::filesystem::path folder, std::filesystem::path lock_file);

  const std::filesystem::path& lock_file() const { return lock_file_; }
  // The pid a stale lock file named when it was taken over, else 0.
  pid_t stale_holder() const { return stale_holder_; }

 private:
  std::filesystem::path folder_;
  std::filesystem::path lock_file_;
  int fd_ = -1;
  pid_t stale_holder_ = 0;
};

// "stores/a.pairs" -> "stores/a.pairs.lock": the lock file beside a folder that is
// written under another name first (NAME.partial/).
std::filesystem::path lock_file_beside(const std::filesystem::path& folder);

}  // namespace tinct
