// SHA-256 (FIPS 180-4) of bytes or a file, as lowercase hex, computed by OpenSSL's
// libcrypto (EVP interface); this wrapper owns the digest context. Used for config
// hashes and checksums of written files.
#pragma once

#include <cstddef>
#include <filesystem>
#include <memory>
#include <string>

struct evp_md_ctx_st;

namespace tinct {

// Streaming: update() any number of times, then hex_digest() once.
class Sha256 {
 public:
  Sha256();
  ~Sha256();
  Sha256(Sha256&&) noexcept;
  Sha256& operator=(Sha256&&) noexcept;

  void update(const void* data, std::size_t size);
  std::string hex_digest();  // finalises; call once

 private:
  struct Free {
    void operator()(evp_md_ctx_st* context) const;
  };
  std::unique_ptr<evp_md_ctx_st, Free> context_;
};

std::string sha256_hex(const std::string& bytes);
// Reads the file in blocks; fails (runtime) naming it when it cannot be read.
std::string sha256_file(const std::filesystem::path& file);

}  // namespace tinct
