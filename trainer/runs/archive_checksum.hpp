// A checksum inside a model archive without changing its format: LibTorch archives are
// zip files, and a zip file may end with a comment. tinct writes the archive as LibTorch
// makes it, then sets the end record's comment to "tinct-sha256:" and the SHA-256 of the
// bytes before the comment (with the comment length still 0). Zip readers, LibTorch and
// Python's zipfile among them, read the file as before; tinct recomputes the digest in
// blocks before loading. Plain C++ (no LibTorch), so it can be tested and fuzzed alone.
#pragma once

#include <cstddef>
#include <cstdint>
#include <filesystem>
#include <optional>
#include <string>

namespace tinct {

// Bytes appended to a finished zip: comment length in the end record, then the comment.
struct ArchiveTrailer {
  std::uint64_t length_offset = 0;  // where the 2-byte comment length goes
  std::string length_bytes;         // its new value, little-endian
  std::string comment;              // appended at the end of the file
};

// `tail` is the last 22 bytes of a zip as written (the end of central directory record
// with an empty comment); nullopt when it is not one. `digest` is the SHA-256 hex of
// the whole file as written, of which `size` is the length.
std::optional<ArchiveTrailer> archive_trailer(const std::string& tail, std::uint64_t size, const std::string& digest);

enum class ChecksumCheck { matches, absent, differs };

struct ChecksumResult {
  ChecksumCheck check = ChecksumCheck::absent;
  std::string recorded, found;  // hex, when present
};

// Reads `file` once in blocks. Fails (runtime) when it cannot be read.
ChecksumResult check_archive_checksum(const std::filesystem::path& file);

}  // namespace tinct
