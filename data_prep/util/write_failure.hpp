// The one way tinct reports a failed write: the file, what failed, the bytes it
// was writing and the free space of the file system holding it, so a full disk
// is plain to see and the user knows how much room to make.
#pragma once

#include <cstdint>
#include <filesystem>
#include <string>

namespace tinct {

// "cannot write FILE: REASON (writing N bytes after M; X free on the file system of
// FOLDER); free space or write elsewhere". Negative counts are left out.
std::string write_failure_message(const std::filesystem::path& file, const std::string& reason,
                                  std::int64_t attempted_bytes = -1, std::int64_t written_before = -1);

[[noreturn]] void fail_write(const std::filesystem::path& file, const std::string& reason,
                             std::int64_t attempted_bytes = -1, std::int64_t written_before = -1);

// "1.5 GiB free on the file system of stores" ("" when statvfs fails).
std::string free_space_note(const std::filesystem::path& file);

// Byte counts for people: "812 bytes", "4.0 KiB", "1.5 GiB".
std::string byte_text(std::uint64_t bytes);

}  // namespace tinct
