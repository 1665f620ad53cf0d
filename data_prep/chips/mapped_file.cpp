#include "chips/mapped_file.hpp"

#include <fcntl.h>
#include <sys/mman.h>
#include <sys/stat.h>
#include <unistd.h>

#include <algorithm>
#include <cerrno>
#include <cstring>
#include <utility>

#include "util/error.hpp"

namespace tinct {

MappedFile MappedFile::open(const std::filesystem::path& file, MapAccess access) {
  const int fd = ::open(file.c_str(), O_RDONLY | O_CLOEXEC);
  if (fd < 0) fail_runtime("cannot open " + file.string() + ": " + std::strerror(errno));
  struct stat info {};
  if (::fstat(fd, &info) != 0 || !S_ISREG(info.st_mode)) {
    ::close(fd);
    fail_runtime("cannot read " + file.string() + ": not a regular file");
  }
  MappedFile mapped;
  mapped.size_ = static_cast<std::size_t>(info.st_size);
  if (mapped.size_ > 0) {
    void* data = ::mmap(nullptr, mapped.size_, PROT_READ, MAP_SHARED, fd, 0);
    const int mmap_errno = errno;
    ::close(fd);  // the mapping keeps the file open
    if (data == MAP_FAILED) {
      fail_runtime("cannot map " + file.string() + ": " + std::strerror(mmap_errno));
    }
    mapped.data_ = static_cast<const std::uint8_t*>(data);
    ::madvise(data, mapped.size_, access == MapAccess::sequential ? MADV_SEQUENTIAL : MADV_NORMAL);
  } else {
    ::close(fd);
  }
  return mapped;
}

MappedFile::MappedFile(MappedFile&& other) noexcept
    : data_(std::exchange(other.data_, nullptr)), size_(std::exchange(other.size_, 0)) {}

MappedFile& MappedFile::operator=(MappedFile&& other) noexcept {
  if (this != &other) {
    unmap();
    data_ = std::exchange(other.data_, nullptr);
    size_ = std::exchange(other.size_, 0);
  }
  return *this;
}

MappedFile::~MappedFile() { unmap(); }

void MappedFile::unmap() {
  if (data_ != nullptr) ::munmap(const_cast<std::uint8_t*>(data_), size_);
  data_ = nullptr;
  size_ = 0;
}

void MappedFile::will_need(std::size_t offset, std::size_t length) const {
  if (data_ == nullptr || offset >= size_) return;
  const auto page = static_cast<std::size_t>(::sysconf(_SC_PAGESIZE));
  const std::size_t start = offset - offset % page;  // madvise wants a page-aligned start
  const std::size_t end = std::min(size_, offset + length);
  ::madvise(const_cast<std::uint8_t*>(data_) + start, end - start, MADV_WILLNEED);
}

void MappedFile::release(std::size_t offset, std::size_t length) const {
  constexpr std::size_t kBlock = 2 * 1024 * 1024;
  if (data_ == nullptr || offset >= size_ || length == 0) return;
  const std::size_t start = offset / kBlock * kBlock;
  const std::size_t end = std::min(size_, (offset + length + kBlock - 1) / kBlock * kBlock);
  ::madvise(const_cast<std::uint8_t*>(data_) + start, end - start, MADV_DONTNEED);
}

void release_pages(const void* begin, std::size_t length) {
  const auto page = static_cast<std::uintptr_t>(::sysconf(_SC_PAGESIZE));
  const auto start = reinterpret_cast<std::uintptr_t>(begin);
  const std::uintptr_t first = (start + page - 1) / page * page;
  const std::uintptr_t last = (start + length) / page * page;
  if (last > first) ::madvise(reinterpret_cast<void*>(first), last - first, MADV_DONTNEED);
}

}  // namespace tinct
