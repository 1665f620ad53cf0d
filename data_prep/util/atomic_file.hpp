// Writing outputs so that a crash or kill never leaves a half-written file behind:
// data goes to a temporary name in the same folder, is fsynced, then renamed over
// the target. Folders (stores) follow the same idea with NAME.partial/.
#pragma once

#include <filesystem>
#include <string>

#include "util/folder_lock.hpp"

namespace tinct {

// Replaces `path` with `contents` atomically.
void write_file_atomic(const std::filesystem::path& path, const std::string& contents);

// A temporary path beside `path` that write-then-rename code can use.
std::filesystem::path temporary_sibling(const std::filesystem::path& path);

// Flushes a written file and renames it over `target`, then syncs the folder.
void commit_file(const std::filesystem::path& written, const std::filesystem::path& target);

// A folder built under NAME.partial/ and renamed to NAME by commit(); removed if
// destroyed before commit (an exception or an early return). Holds the lock file
// NAME.lock from before NAME.partial/ is touched until it is gone again, so a second
// writer is refused instead of deleting the first one's work.
class PartialFolder {
 public:
  // Fails if `target` exists unless `replace` is set, or if another process writes it.
  PartialFolder(std::filesystem::path target, bool replace);
  ~PartialFolder();
  PartialFolder(const PartialFolder&) = delete;
  PartialFolder& operator=(const PartialFolder&) = delete;

  const std::filesystem::path& path() const { return partial_; }
  const std::filesystem::path& target() const { return target_; }
  void commit();

 private:
  std::filesystem::path target_;
  FolderLock lock_;
  std::filesystem::path partial_;
  bool replace_;
  bool committed_ = false;
};

}  // namespace tinct
