// SHA-256 (FIPS 180-4) of bytes or a file, as lowercase hex. Used for config
// hashes and to verify downloaded test data.
#pragma once

#include <cstdint>
#include <filesystem>
#include <string>

namespace tinct {

class Sha256 {
 public:
  Sha256();
  void update(const void* data, std::size_t size);
  std::string hex_digest();  // finalises; call once

 private:
  void compress(const std::uint8_t* block);
  std::uint32_t state_[8];
  std::uint8_t buffer_[64];
  std::size_t buffered_ = 0;
  std::uint64_t total_bytes_ = 0;
};

std::string sha256_hex(const std::string& bytes);
std::string sha256_file(const std::filesystem::path& file);

}  // namespace tinct
