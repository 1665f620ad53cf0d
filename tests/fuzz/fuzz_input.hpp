// What the fuzz targets share: a private temporary folder for readers that take a path,
// and the rule that tinct::Error is the expected way to refuse bad input. Any other
// exception escapes to libFuzzer, which reports it as a finding: main() would print it
// as an "unexpected failure", which no input should cause.
#pragma once

#include <unistd.h>

#include <cstddef>
#include <cstdint>
#include <cstdlib>
#include <filesystem>
#include <fstream>
#include <string>

#include "util/error.hpp"

namespace tinct::fuzz {

// A folder of this process's own, made once and removed at exit.
inline const std::filesystem::path& scratch_folder() {
  static const std::filesystem::path folder = [] {
    const char* tmp = std::getenv("TMPDIR");
    std::string pattern = std::string(tmp != nullptr ? tmp : "/tmp") + "/tinct-fuzz-XXXXXX";
    if (mkdtemp(pattern.data()) == nullptr) std::abort();
    std::atexit([] { std::error_code ignored; std::filesystem::remove_all(scratch_folder(), ignored); });
    return std::filesystem::path(pattern);
  }();
  return folder;
}

inline std::string as_text(const std::uint8_t* data, std::size_t size) {
  return std::string(reinterpret_cast<const char*>(data), size);
}

// Writes the input to scratch_folder()/name (replacing it) and returns the path.
inline std::filesystem::path input_file(const std::string& name, const std::uint8_t* data, std::size_t size) {
  const std::filesystem::path file = scratch_folder() / name;
  std::ofstream out(file, std::ios::binary | std::ios::trunc);
  out.write(reinterpret_cast<const char*>(data), static_cast<std::streamsize>(size));
  if (!out.flush()) std::abort();
  return file;
}

// Runs `read`, accepting a tinct::Error as a proper refusal.
template <typename Read>
void expect_clean_refusal(Read&& read) {
  try {
    read();
  } catch (const tinct::Error&) {
  }
}

}  // namespace tinct::fuzz
