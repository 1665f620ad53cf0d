#include "util/atomic_file.hpp"

#include <fcntl.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>
#include <fstream>
#include <system_error>

#include "util/error.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

void fsync_path(const fs::path& path, int flags) {
  int fd = ::open(path.c_str(), flags);
  if (fd < 0) return;  // best effort: some file systems refuse O_RDONLY on folders
  ::fsync(fd);
  ::close(fd);
}

fs::path parent_or_dot(const fs::path& path) {
  return path.has_parent_path() ? path.parent_path() : fs::path(".");
}

}  // namespace

fs::path temporary_sibling(const fs::path& path) {
  return parent_or_dot(path) /
         ("." + path.filename().string() + ".tmp." + std::to_string(::getpid()));
}

void commit_file(const fs::path& written, const fs::path& target) {
  fsync_path(written, O_RDONLY);
  std::error_code ec;
  fs::rename(written, target, ec);
  if (ec) {
    fs::remove(written, ec);
    fail_runtime("cannot write " + target.string() + ": rename failed (" + ec.message() +
                 "); check that the folder is writable");
  }
  fsync_path(parent_or_dot(target), O_RDONLY | O_DIRECTORY);
}

void write_file_atomic(const fs::path& path, const std::string& contents) {
  const fs::path temporary = temporary_sibling(path);
  {
    std::ofstream out(temporary, std::ios::binary | std::ios::trunc);
    if (!out) {
      fail_runtime("cannot write " + path.string() + ": " + std::strerror(errno) +
                   "; check that the folder exists and is writable");
    }
    out.write(contents.data(), static_cast<std::streamsize>(contents.size()));
    out.flush();
    if (!out) {
      std::error_code ec;
      fs::remove(temporary, ec);
      fail_runtime("cannot write " + path.string() + ": write failed (disk full?)");
    }
  }
  commit_file(temporary, path);
}

PartialFolder::PartialFolder(fs::path target, bool replace)
    : target_(std::move(target)),
      lock_(target_, lock_file_beside(target_), "wait for it to finish or choose another output"),
      replace_(replace) {
  partial_ = target_;
  partial_ += ".partial";
  if (fs::exists(target_) && !replace_) {
    fail_usage(target_.string() + " already exists; choose another output or pass --force");
  }
  std::error_code ec;
  fs::remove_all(partial_, ec);  // left by a killed earlier attempt
  fs::create_directories(partial_, ec);
  if (ec) {
    fail_runtime("cannot create " + partial_.string() + ": " + ec.message());
  }
}

PartialFolder::~PartialFolder() {
  if (!committed_) {
    std::error_code ec;
    fs::remove_all(partial_, ec);
  }
}

void PartialFolder::commit() {
  std::error_code ec;
  if (fs::exists(target_)) {
    if (!replace_) fail_usage(target_.string() + " appeared while writing; pass --force");
    fs::remove_all(target_, ec);
  }
  fs::rename(partial_, target_, ec);
  if (ec) fail_runtime("cannot rename " + partial_.string() + " to " + target_.string() + ": " + ec.message());
  committed_ = true;
  fsync_path(parent_or_dot(target_), O_RDONLY | O_DIRECTORY);
}

}  // namespace tinct
