#include "runs/archive_checksum.hpp"

#include <algorithm>
#include <cerrno>
#include <cstring>
#include <fstream>
#include <vector>

#include "util/error.hpp"
#include "util/sha256.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

constexpr std::size_t kEndRecordSize = 22;  // end of central directory, empty comment
const char kEndRecordSignature[] = {'P', 'K', 5, 6};
const std::string kCommentPrefix = "tinct-sha256:";
constexpr std::size_t kCommentSize = 13 + 64;

std::uint16_t little_u16(const char* bytes) {
  return static_cast<std::uint16_t>(static_cast<unsigned char>(bytes[0]) |
                                    (static_cast<unsigned char>(bytes[1]) << 8));
}

bool is_hex(const std::string& text) {
  return text.size() == 64 && text.find_first_not_of("0123456789abcdef") == std::string::npos;
}

}  // namespace

std::optional<ArchiveTrailer> archive_trailer(const std::string& tail, std::uint64_t size, const std::string& digest) {
  if (tail.size() != kEndRecordSize || size < kEndRecordSize) return std::nullopt;
  if (std::memcmp(tail.data(), kEndRecordSignature, 4) != 0 || little_u16(tail.data() + 20) != 0) return std::nullopt;
  ArchiveTrailer trailer;
  trailer.length_offset = size - 2;
  trailer.length_bytes = {static_cast<char>(kCommentSize & 0xff), static_cast<char>(kCommentSize >> 8)};
  trailer.comment = kCommentPrefix + digest;
  return trailer;
}

ChecksumResult check_archive_checksum(const fs::path& file) {
  std::ifstream in(file, std::ios::binary);
  if (!in) fail_runtime("cannot read " + file.string() + ": " + std::strerror(errno));
  in.seekg(0, std::ios::end);
  const auto size = static_cast<std::uint64_t>(in.tellg());
  ChecksumResult result;
  const std::size_t trailer_size = kEndRecordSize + kCommentSize;
  if (size < trailer_size) return result;
  std::string trailer(trailer_size, '\0');
  in.seekg(static_cast<std::streamoff>(size - trailer_size));
  in.read(trailer.data(), static_cast<std::streamsize>(trailer_size));
  const std::string comment = trailer.substr(kEndRecordSize);
  if (!in || std::memcmp(trailer.data(), kEndRecordSignature, 4) != 0 || little_u16(trailer.data() + 20) != kCommentSize ||
      comment.compare(0, kCommentPrefix.size(), kCommentPrefix) != 0 || !is_hex(comment.substr(kCommentPrefix.size()))) {
    return result;
  }
  result.recorded = comment.substr(kCommentPrefix.size());
  // The digest covers the file as LibTorch wrote it: up to the comment length, then 0.
  Sha256 hash;
  in.seekg(0);
  std::vector<char> block(1 << 20);
  std::uint64_t left = size - kCommentSize - 2;
  while (left > 0 && in) {
    const auto want = static_cast<std::streamsize>(std::min<std::uint64_t>(left, block.size()));
    in.read(block.data(), want);
    if (in.gcount() != want) fail_runtime("cannot read " + file.string() + ": it ended early while being read");
    hash.update(block.data(), static_cast<std::size_t>(want));
    left -= static_cast<std::uint64_t>(want);
  }
  const char zero_length[2] = {0, 0};
  hash.update(zero_length, 2);
  result.found = hash.hex_digest();
  result.check = result.found == result.recorded ? ChecksumCheck::matches : ChecksumCheck::differs;
  return result;
}

}  // namespace tinct
