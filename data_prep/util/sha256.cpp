#include "util/sha256.hpp"

#include <openssl/evp.h>

#include <fstream>
#include <vector>

#include "util/error.hpp"

namespace tinct {
namespace {

[[noreturn]] void fail_digest(const char* step) {
  fail_runtime(std::string("SHA-256: OpenSSL's ") + step + " failed; check the libssl3 installation");
}

}  // namespace

void Sha256::Free::operator()(evp_md_ctx_st* context) const { EVP_MD_CTX_free(context); }

Sha256::Sha256() : context_(EVP_MD_CTX_new()) {
  if (!context_ || EVP_DigestInit_ex(context_.get(), EVP_sha256(), nullptr) != 1) fail_digest("EVP_DigestInit_ex");
}

Sha256::~Sha256() = default;
Sha256::Sha256(Sha256&&) noexcept = default;
Sha256& Sha256::operator=(Sha256&&) noexcept = default;

void Sha256::update(const void* data, std::size_t size) {
  if (EVP_DigestUpdate(context_.get(), data, size) != 1) fail_digest("EVP_DigestUpdate");
}

std::string Sha256::hex_digest() {
  unsigned char digest[EVP_MAX_MD_SIZE];
  unsigned int length = 0;
  if (EVP_DigestFinal_ex(context_.get(), digest, &length) != 1) fail_digest("EVP_DigestFinal_ex");
  static const char kHex[] = "0123456789abcdef";
  std::string hex;
  for (unsigned int i = 0; i < length; ++i) {
    hex += kHex[digest[i] >> 4];
    hex += kHex[digest[i] & 0xf];
  }
  return hex;
}

std::string sha256_hex(const std::string& bytes) {
  Sha256 hash;
  hash.update(bytes.data(), bytes.size());
  return hash.hex_digest();
}

std::string sha256_file(const std::filesystem::path& file) {
  std::ifstream in(file, std::ios::binary);
  if (!in) fail_runtime("cannot read " + file.string() + " to hash it");
  Sha256 hash;
  std::vector<char> buffer(1 << 16);
  while (in) {
    in.read(buffer.data(), static_cast<std::streamsize>(buffer.size()));
    hash.update(buffer.data(), static_cast<std::size_t>(in.gcount()));
  }
  if (in.bad()) fail_runtime("cannot read " + file.string() + " to hash it: read error");
  return hash.hex_digest();
}

}  // namespace tinct
