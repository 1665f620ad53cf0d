// A whole file mapped read-only (MAP_SHARED) and unmapped on destruction, so store
// readers see chips through the page cache without copying or loading them.
// Readers check sizes themselves; an empty file maps to no pointer and size 0.
#pragma once

#include <cstddef>
#include <cstdint>
#include <filesystem>

namespace tinct {

enum class MapAccess { normal, sequential };  // the madvise hint for the whole file

// Drops the pages of [begin, begin + length) from this process's resident set
// (MADV_DONTNEED; read-only shared maps reread them from the file if touched again),
// so one pass over a large store keeps memory bounded. Only whole pages inside the
// range are dropped.
void release_pages(const void* begin, std::size_t length);

class MappedFile {
 public:
  MappedFile() = default;
  // Fails (runtime) when the file cannot be opened or mapped.
  static MappedFile open(const std::filesystem::path& file, MapAccess access);
  MappedFile(MappedFile&& other) noexcept;
  MappedFile& operator=(MappedFile&& other) noexcept;
  MappedFile(const MappedFile&) = delete;
  MappedFile& operator=(const MappedFile&) = delete;
  ~MappedFile();

  const std::uint8_t* data() const { return data_; }
  std::size_t size() const { return size_; }
  // Asks the kernel to start reading this byte range (MADV_WILLNEED).
  void will_need(std::size_t offset, std::size_t length) const;
  // Drops this byte range from the resident set together with the rest of the 2 MiB
  // blocks it touches: a page fault maps more than its page (the kernel's fault-around,
  // and whole large folios of the page cache, up to 2 MiB), and those neighbours would
  // stay resident and grow with the store (400 chips of 96 KiB read at random, each
  // released page by page, left 94 MiB resident; in 2 MiB blocks none). Read-only
  // shared maps lose nothing: a page touched again is mapped again from the cache.
  void release(std::size_t offset, std::size_t length) const;

 private:
  void unmap();
  const std::uint8_t* data_ = nullptr;
  std::size_t size_ = 0;
};

}  // namespace tinct
