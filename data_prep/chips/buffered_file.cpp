#include "chips/buffered_file.hpp"

#include <fcntl.h>
#include <unistd.h>

#include <cerrno>
#include <cstring>

#include "util/error.hpp"
#include "util/write_failure.hpp"

namespace tinct {

BufferedFile::BufferedFile(std::filesystem::path file, std::size_t buffer_bytes)
    : path_(std::move(file)), buffer_(buffer_bytes) {
  fd_ = ::open(path_.c_str(), O_WRONLY | O_CREAT | O_TRUNC | O_CLOEXEC, 0644);
  if (fd_ < 0) {
    fail_runtime("cannot create " + path_.string() + ": " + std::strerror(errno) +
                 "; check that the folder is writable");
  }
}

BufferedFile::~BufferedFile() {
  if (fd_ >= 0) ::close(fd_);
}

void BufferedFile::write(const void* data, std::size_t size) {
  if (fd_ < 0) fail_runtime("cannot write " + path_.string() + ": already closed");
  const char* bytes = static_cast<const char*>(data);
  if (used_ + size > buffer_.size()) {
    flush();
    if (size >= buffer_.size()) {
      write_through(bytes, size);
      return;
    }
  }
  std::memcpy(buffer_.data() + used_, bytes, size);
  used_ += size;
}

void BufferedFile::close() {
  if (fd_ < 0) return;
  flush();
  if (::fsync(fd_) != 0 && errno != EINVAL) {
    fail_write(path_, std::string("fsync failed: ") + std::strerror(errno), -1, written_);
  }
  digest_ = hash_.hex_digest();
  const int fd = fd_;
  fd_ = -1;
  if (::close(fd) != 0) fail_write(path_, std::string("close failed: ") + std::strerror(errno), -1, written_);
}

const std::string& BufferedFile::sha256() const {
  if (digest_.empty()) fail_runtime("the checksum of " + path_.string() + " is known only after close()");
  return digest_;
}

void BufferedFile::flush() {
  const std::int64_t from = written_;
  write_through(buffer_.data(), used_);
  used_ = 0;
  // Starts the disk write of what just went out, so close()'s fsync waits only for the
  // last of it; best effort (fsync reports any failure).
  if (written_ > from) ::sync_file_range(fd_, from, written_ - from, SYNC_FILE_RANGE_WRITE);
}

void BufferedFile::write_through(const char* data, std::size_t size) {
  const auto attempted = static_cast<std::int64_t>(size);
  hash_.update(data, size);  // a failed write ends the store, so the hash never sees a byte twice
  while (size > 0) {
    const ssize_t written = ::write(fd_, data, size);
    if (written < 0 && errno == EINTR) continue;
    if (written <= 0) fail_write(path_, std::strerror(written < 0 ? errno : ENOSPC), attempted, written_);
    data += written;
    size -= static_cast<std::size_t>(written);
    written_ += written;
  }
}

}  // namespace tinct
