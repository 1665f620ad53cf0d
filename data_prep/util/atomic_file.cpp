#include "util/atomic_file.hpp"

#include <fcntl.h>
#include <signal.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>
#include <system_error>

#include "util/error.hpp"
#include "util/log.hpp"
#include "util/write_failure.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

// Best effort: some file systems refuse to open or sync a folder.
void sync_folder(const fs::path& folder) {
  const int fd = ::open(folder.c_str(), O_RDONLY | O_DIRECTORY | O_CLOEXEC);
  if (fd < 0) return;
  ::fsync(fd);
  ::close(fd);
}

fs::path parent_or_dot(const fs::path& path) {
  return path.has_parent_path() ? path.parent_path() : fs::path(".");
}

fs::path with_suffix(fs::path path, const char* suffix) {
  if (!path.has_filename()) path = path.parent_path();  // "a.pairs/" names the folder a.pairs
  path += suffix;
  return path;
}

void remove_quietly(const fs::path& path) {
  std::error_code ignored;
  fs::remove(path, ignored);
}

// Renames, or removes `from` when `remove_on_failure` and fails naming `target` with
// the rename's own errno (saved before any cleanup can change it).
void rename_into_place(const fs::path& from, const fs::path& target, bool remove_on_failure) {
  if (::rename(from.c_str(), target.c_str()) == 0) return;
  const int error = errno;
  if (remove_on_failure) remove_quietly(from);
  fail_runtime("cannot write " + target.string() + ": renaming " + from.string() + " failed (" +
               std::strerror(error) + "); check that the folder is writable");
}

}  // namespace

fs::path temporary_sibling(const fs::path& path) {
  return parent_or_dot(path) /
         ("." + path.filename().string() + ".tmp." + std::to_string(::getpid()));
}

namespace {

// The pid of ".NAME.tmp.PID", or 0 when the name is not a temporary's.
pid_t temporary_owner(const std::string& name) {
  const std::size_t at = name.rfind(".tmp.");
  if (name.size() < 2 || name[0] != '.' || at == std::string::npos || at + 5 >= name.size()) return 0;
  const std::string digits = name.substr(at + 5);
  if (digits.find_first_not_of("0123456789") != std::string::npos || digits.size() > 9) return 0;
  return static_cast<pid_t>(std::stol(digits));
}

bool process_lives(pid_t pid) { return ::kill(pid, 0) == 0 || errno == EPERM; }

}  // namespace

int remove_orphaned_temporaries(const fs::path& folder) {
  int removed = 0;
  std::error_code ec;
  for (fs::recursive_directory_iterator it(folder, ec), end; !ec && it != end; it.increment(ec)) {
    const pid_t owner = temporary_owner(it->path().filename().string());
    if (owner <= 0 || owner == ::getpid() || process_lives(owner) || !it->is_regular_file(ec)) continue;
    std::error_code removal;
    if (fs::remove(it->path(), removal)) {
      log::info("removed " + it->path().string() + ", a temporary file left by an interrupted write");
      ++removed;
    }
  }
  return removed;
}

fs::path partial_folder_of(const fs::path& target) { return with_suffix(target, ".partial"); }
fs::path aside_folder_of(const fs::path& target) { return with_suffix(target, ".previous"); }

void commit_file(const fs::path& written, const fs::path& target) {
  const int fd = ::open(written.c_str(), O_RDONLY | O_CLOEXEC);
  if (fd >= 0) {
    const int synced = ::fsync(fd);
    const int error = errno;
    ::close(fd);
    if (synced != 0 && error != EINVAL) {
      const std::string message = write_failure_message(target, std::string("fsync failed: ") + std::strerror(error));
      remove_quietly(written);
      fail_runtime(message);
    }
  }
  rename_into_place(written, target, /*remove_on_failure=*/true);
  sync_folder(parent_or_dot(target));
}

AtomicFile::AtomicFile(fs::path target) : target_(std::move(target)), temporary_(temporary_sibling(target_)) {
  fd_ = ::open(temporary_.c_str(), O_WRONLY | O_CREAT | O_TRUNC | O_CLOEXEC, 0644);
  if (fd_ < 0) {
    const int error = errno;
    temporary_.clear();  // nothing was created
    fail_runtime("cannot write " + target_.string() + ": " + std::strerror(error) +
                 "; check that the folder exists and is writable");
  }
}

AtomicFile::~AtomicFile() {
  if (fd_ >= 0) ::close(fd_);
  if (!temporary_.empty()) remove_quietly(temporary_);
}

void AtomicFile::write(const void* data, std::size_t size) {
  if (fd_ < 0) fail_runtime("cannot write " + target_.string() + ": the file is already committed");
  const char* bytes = static_cast<const char*>(data);
  std::size_t left = size;
  while (left > 0) {
    const ssize_t n = ::write(fd_, bytes, left);
    if (n < 0 && errno == EINTR) continue;
    if (n <= 0) {
      const int error = n < 0 ? errno : ENOSPC;
      // Measured before the temporary goes, so the free space shows what the write met.
      const std::string message = write_failure_message(target_, std::strerror(error),
                                                        static_cast<std::int64_t>(size), written_);
      ::close(fd_);
      fd_ = -1;
      remove_quietly(temporary_);
      temporary_.clear();
      fail_runtime(message);
    }
    bytes += n;
    left -= static_cast<std::size_t>(n);
  }
  written_ += static_cast<std::int64_t>(size);
}

void AtomicFile::commit() {
  if (fd_ < 0) fail_runtime("cannot write " + target_.string() + ": the file is already committed");
  const int fd = fd_;
  fd_ = -1;
  const bool synced = ::fsync(fd) == 0 || errno == EINVAL;
  const int sync_error = errno;
  const bool closed = ::close(fd) == 0;
  const int close_error = errno;
  if (!synced || !closed) {
    const std::string message = write_failure_message(
        target_, std::string(synced ? "close failed: " : "fsync failed: ") + std::strerror(synced ? close_error : sync_error),
        written_);
    remove_quietly(temporary_);
    temporary_.clear();
    fail_runtime(message);
  }
  const fs::path temporary = temporary_;
  temporary_.clear();  // removed by rename_into_place on failure
  rename_into_place(temporary, target_, /*remove_on_failure=*/true);
  sync_folder(parent_or_dot(target_));
}

void write_file_atomic(const fs::path& path, const std::string& contents) {
  AtomicFile file(path);
  file.write(contents);
  file.commit();
}

PartialFolder::PartialFolder(fs::path target, bool replace)
    : target_(std::move(target)),
      lock_(target_, lock_file_beside(target_), "wait for it to finish or choose another output"),
      partial_(partial_folder_of(target_)),
      aside_(aside_folder_of(target_)),
      replace_(replace) {
  clear_leftovers();
  if (fs::exists(target_) && !replace_) {
    fail_usage(target_.string() + " already exists; choose another output or pass --force");
  }
  std::error_code ec;
  fs::create_directories(partial_, ec);
  if (ec) fail_runtime("cannot create " + partial_.string() + ": " + ec.message() + "; check that the folder is writable");
}

// What a killed writer left: NAME.previous/ (a replacement between its renames or
// before its deletion) and NAME.partial/.
void PartialFolder::clear_leftovers() {
  std::error_code ec;
  if (fs::exists(aside_)) {
    if (fs::exists(target_)) {
      log::info("removing " + aside_.string() + ": an interrupted replacement had already put the new " +
                target_.string() + " in its place");
      fs::remove_all(aside_, ec);
      if (ec) fail_runtime("cannot remove " + aside_.string() + ": " + ec.message() + "; remove it by hand");
    } else {
      log::info("restoring " + target_.string() + " from " + aside_.string() +
                ", where an interrupted replacement had moved it");
      if (::rename(aside_.c_str(), target_.c_str()) != 0) {
        const int error = errno;
        fail_runtime("cannot restore " + target_.string() + " from " + aside_.string() + ": " + std::strerror(error) +
                     "; rename it back by hand");
      }
      sync_folder(parent_or_dot(target_));
    }
  }
  if (fs::exists(partial_)) {
    log::info("removing " + partial_.string() + ", left by an interrupted run");
    fs::remove_all(partial_, ec);
    if (ec) fail_runtime("cannot remove " + partial_.string() + ": " + ec.message() + "; remove it by hand");
  }
}

PartialFolder::~PartialFolder() {
  if (!committed_) {
    std::error_code ec;
    fs::remove_all(partial_, ec);
  }
}

void PartialFolder::commit() {
  const bool replacing = fs::exists(target_);
  if (replacing) {
    if (!replace_) fail_usage(target_.string() + " appeared while writing; pass --force");
    if (::rename(target_.c_str(), aside_.c_str()) != 0) {
      const int error = errno;
      fail_runtime("cannot replace " + target_.string() + ": moving it aside to " + aside_.string() + " failed (" +
                   std::strerror(error) + "); check that the folder is writable");
    }
    sync_folder(parent_or_dot(target_));
  }
  if (::rename(partial_.c_str(), target_.c_str()) != 0) {
    const int error = errno;
    if (replacing) ::rename(aside_.c_str(), target_.c_str());  // the old one back in place
    fail_runtime("cannot rename " + partial_.string() + " to " + target_.string() + ": " + std::strerror(error) +
                 "; check that the folder is writable");
  }
  committed_ = true;
  sync_folder(parent_or_dot(target_));
  if (replacing) {
    std::error_code ec;
    fs::remove_all(aside_, ec);
    if (ec) log::warning("cannot remove the replaced " + aside_.string() + ": " + ec.message() + "; remove it by hand");
  }
}

}  // namespace tinct
