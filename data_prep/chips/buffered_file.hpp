// An output file written through a large buffer with plain write(2), fsynced on
// close: stores stream hundreds of MB/s of chips to disk without holding them.
// The bytes are hashed (SHA-256) as they go out, so the store's checksums need no
// second read of what was just written.
// Errors (disk full, I/O) name the file, the bytes and the free space; the
// destructor closes without syncing.
#pragma once

#include <cstddef>
#include <cstdint>
#include <filesystem>
#include <string>
#include <vector>

#include "util/sha256.hpp"

namespace tinct {

class BufferedFile {
 public:
  // Creates or truncates `file`; fails (runtime) when it cannot.
  explicit BufferedFile(std::filesystem::path file, std::size_t buffer_bytes = 4 << 20);
  BufferedFile(const BufferedFile&) = delete;
  BufferedFile& operator=(const BufferedFile&) = delete;
  ~BufferedFile();

  void write(const void* data, std::size_t size);
  // Writes out the buffer, fsyncs and closes; further writes are errors.
  void close();
  const std::filesystem::path& path() const { return path_; }
  // The SHA-256 of everything written, as sha256_file() would give it; after close().
  const std::string& sha256() const;

 private:
  void write_through(const char* data, std::size_t size);
  void flush();
  std::filesystem::path path_;
  int fd_ = -1;
  std::vector<char> buffer_;
  std::size_t used_ = 0;
  std::int64_t written_ = 0;  // bytes on disk so far, for messages
  Sha256 hash_;
  std::string digest_;  // set by close()
};

}  // namespace tinct
