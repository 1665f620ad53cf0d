#include "util/write_failure.hpp"

#include <sys/statvfs.h>

#include <cstdio>

#include "util/error.hpp"

namespace fs = std::filesystem;

namespace tinct {

std::string byte_text(std::uint64_t bytes) {
  if (bytes < 1024) return std::to_string(bytes) + " bytes";
  const char* units[] = {"KiB", "MiB", "GiB", "TiB"};
  double value = static_cast<double>(bytes) / 1024;
  int unit = 0;
  while (value >= 1024 && unit < 3) {
    value /= 1024;
    ++unit;
  }
  char text[32];
  std::snprintf(text, sizeof(text), "%.1f %s", value, units[unit]);
  return text;
}

std::string free_space_note(const fs::path& file) {
  const fs::path folder = file.has_parent_path() ? file.parent_path() : fs::path(".");
  struct statvfs info {};
  if (::statvfs(folder.c_str(), &info) != 0) return "";
  const auto free_bytes = static_cast<std::uint64_t>(info.f_bavail) * info.f_frsize;
  return byte_text(free_bytes) + " free on the file system of " + folder.string();
}

std::string write_failure_message(const fs::path& file, const std::string& reason, std::int64_t attempted_bytes,
                                  std::int64_t written_before) {
  std::string detail;
  if (attempted_bytes >= 0) {
    detail = "writing " + std::to_string(attempted_bytes) + " bytes";
    if (written_before > 0) detail += " after " + std::to_string(written_before);
  }
  const std::string space = free_space_note(file);
  if (!space.empty()) detail += (detail.empty() ? "" : "; ") + space;
  return "cannot write " + file.string() + ": " + reason + (detail.empty() ? "" : " (" + detail + ")") +
         "; free space or write elsewhere, and check that the folder is writable";
}

void fail_write(const fs::path& file, const std::string& reason, std::int64_t attempted_bytes,
                std::int64_t written_before) {
  fail_runtime(write_failure_message(file, reason, attempted_bytes, written_before));
}

}  // namespace tinct
