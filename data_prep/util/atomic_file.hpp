// Writing outputs so that a crash or kill never leaves a half-written file behind:
// data goes to a temporary name in the same folder, is fsynced, then renamed over
// the target. Folders (stores) follow the same idea with NAME.partial/, and an old
// NAME is renamed aside before the new one is renamed in, so a kill leaves the old
// or the new folder whole. Failed writes name the file, the bytes and the free space.
#pragma once

#include <cstddef>
#include <cstdint>
#include <filesystem>
#include <string>

#include "util/folder_lock.hpp"

namespace tinct {

// Replaces `path` with `contents` atomically.
void write_file_atomic(const std::filesystem::path& path, const std::string& contents);

// A temporary path beside `path` that write-then-rename code can use.
std::filesystem::path temporary_sibling(const std::filesystem::path& path);

// Flushes a written file and renames it over `target`, then syncs the folder. On
// failure `written` is removed and the error names `target`.
void commit_file(const std::filesystem::path& written, const std::filesystem::path& target);

// A file written under temporary_sibling(target) with plain write(2), renamed over
// the target by commit(); the temporary is removed when destroyed uncommitted.
class AtomicFile {
 public:
  explicit AtomicFile(std::filesystem::path target);
  ~AtomicFile();
  AtomicFile(const AtomicFile&) = delete;
  AtomicFile& operator=(const AtomicFile&) = delete;

  void write(const void* data, std::size_t size);
  void write(const std::string& text) { write(text.data(), text.size()); }
  void commit();

 private:
  std::filesystem::path target_;
  std::filesystem::path temporary_;
  int fd_ = -1;
  std::int64_t written_ = 0;
};

// A folder built under NAME.partial/ and renamed to NAME by commit(); removed if
// destroyed before commit (an exception or an early return). Holds the lock file
// NAME.lock from before NAME.partial/ is touched until it is gone again, so a second
// writer is refused instead of deleting the first one's work. Replacing renames the
// old NAME to NAME.previous/, the new one in, then deletes the old; a NAME.previous/
// left by a kill is put back (no NAME) or deleted (NAME whole) by the next writer.
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
  void clear_leftovers();

  std::filesystem::path target_;
  FolderLock lock_;
  std::filesystem::path partial_;
  std::filesystem::path aside_;
  bool replace_;
  bool committed_ = false;
};

// "stores/a.pairs" -> "stores/a.pairs.partial" and "stores/a.pairs.previous".
std::filesystem::path partial_folder_of(const std::filesystem::path& target);
std::filesystem::path aside_folder_of(const std::filesystem::path& target);

// Removes the temporaries of atomic writes (".NAME.tmp.PID") anywhere under `folder` whose
// process has ended, a kill having cut their write short; returns how many. For a folder
// whose lock the caller holds.
int remove_orphaned_temporaries(const std::filesystem::path& folder);

}  // namespace tinct
