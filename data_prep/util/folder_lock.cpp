// Taking the lock loops because a holder removes the lock file before dropping its
// lock: a process that opened the old file in between locks an unlinked inode and
// must open the path again (compared by device and inode).
#include "util/folder_lock.hpp"

#include <fcntl.h>
#include <sys/file.h>
#include <sys/stat.h>
#include <unistd.h>

#include <cerrno>
#include <cstdlib>
#include <cstring>

#include "util/error.hpp"
#include "util/log.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

// The pid written in a lock file, or 0 when it holds none (being written, or empty).
pid_t pid_in(int fd) {
  char text[32] = {};
  const ssize_t n = ::pread(fd, text, sizeof(text) - 1, 0);
  if (n <= 0) return 0;
  char* end = nullptr;
  const long pid = std::strtol(text, &end, 10);
  return pid > 0 && end != text ? static_cast<pid_t>(pid) : 0;
}

bool is_current_file(int fd, const fs::path& path) {
  struct stat held {}, named {};
  if (::fstat(fd, &held) != 0 || ::stat(path.c_str(), &named) != 0) return false;
  return held.st_dev == named.st_dev && held.st_ino == named.st_ino;
}

void write_pid(int fd, const fs::path& path) {
  const std::string text = std::to_string(::getpid()) + "\n";
  if (::ftruncate(fd, 0) != 0 || ::pwrite(fd, text.data(), text.size(), 0) != static_cast<ssize_t>(text.size())) {
    fail_runtime("cannot write " + path.string() + ": " + std::strerror(errno) +
                 "; check that the folder is writable and the disk has space");
  }
}

}  // namespace

fs::path lock_file_beside(const fs::path& folder) {
  fs::path file = folder;
  if (!file.has_filename()) file = file.parent_path();  // "a.pairs/" names the folder too
  file += ".lock";
  return file;
}

FolderLock::FolderLock(fs::path folder, fs::path lock_file, const std::string& hint)
    : folder_(std::move(folder)), lock_file_(std::move(lock_file)) {
  std::error_code ec;
  if (lock_file_.has_parent_path()) fs::create_directories(lock_file_.parent_path(), ec);
  while (true) {
    fd_ = ::open(lock_file_.c_str(), O_CREAT | O_RDWR | O_CLOEXEC, 0644);
    if (fd_ < 0) {
      fail_runtime("cannot create the lock file " + lock_file_.string() + ": " + std::strerror(errno) +
                   "; check that the folder is writable");
    }
    if (::flock(fd_, LOCK_EX | LOCK_NB) != 0) {
      const pid_t holder = pid_in(fd_);
      ::close(fd_);
      fd_ = -1;
      fail_runtime(folder_.string() + " is in use by another tinct process (" +
                   (holder > 0 ? "pid " + std::to_string(holder) : std::string("pid not yet recorded")) +
                   ", lock file " + lock_file_.string() + "); " + hint);
    }
    if (is_current_file(fd_, lock_file_)) break;
    ::close(fd_);  // the previous holder removed this file while we opened it
  }
  const pid_t left = pid_in(fd_);
  if (left > 0 && left != ::getpid()) {
    stale_holder_ = left;
    log::info("taking over the lock on " + folder_.string() + " left by process " + std::to_string(left) +
              ", which has ended (stale lock file " + lock_file_.string() + ")");
  }
  try {
    write_pid(fd_, lock_file_);
  } catch (const Error&) {
    release();
    throw;
  }
}

FolderLock::~FolderLock() { release(); }

void FolderLock::moved(fs::path folder, fs::path lock_file) {
  folder_ = std::move(folder);
  lock_file_ = std::move(lock_file);
}

void FolderLock::release() {
  if (fd_ < 0) return;
  std::error_code ec;
  fs::remove(lock_file_, ec);  // while still locked, so no one locks a file about to vanish
  ::flock(fd_, LOCK_UN);
  ::close(fd_);
  fd_ = -1;
}

}  // namespace tinct
