// MappedFile::release hands back what reading a chip mapped, neighbours included: a page
// fault maps more than its page (fault-around, large page-cache folios), so releasing
// only the chip's own pages left memory that grew with the store. Resident sizes are read
// from the kernel's /proc/self/smaps for the mapping's address range.
#include <catch2/catch.hpp>

#include <cstdint>
#include <fstream>
#include <string>
#include <vector>

#include "chips/mapped_file.hpp"
#include "temp_folder.hpp"

namespace {

// Resident kB of the mappings that lie inside [begin, begin + size).
long resident_kb(const std::uint8_t* begin, std::size_t size) {
  std::ifstream smaps("/proc/self/smaps");
  const auto low = reinterpret_cast<std::uintptr_t>(begin), high = low + size;
  bool inside = false;
  long total = 0;
  for (std::string line; std::getline(smaps, line);) {
    const std::string first = line.substr(0, line.find(' '));
    if (first.find(':') == std::string::npos) {  // a mapping's header: "start-end perms ..."
      const std::uintptr_t start = std::stoull(first.substr(0, first.find('-')), nullptr, 16);
      const std::uintptr_t end = std::stoull(first.substr(first.find('-') + 1), nullptr, 16);
      inside = start >= low && end <= high;
    } else if (inside && first == "Rss:") {
      total += std::stol(line.substr(4));
    }
  }
  return total;
}

}  // namespace

TEST_CASE("releasing chips read from a mapped file leaves none of the file resident") {
  tinct::testing::TempFolder folder;
  constexpr std::size_t kChip = 96 * 1024, kChips = 160;  // 15 MiB, chips not aligned to 2 MiB
  {
    std::ofstream out(folder / "bands.bin", std::ios::binary);
    const std::vector<char> chip(kChip, 7);
    for (std::size_t i = 0; i < kChips; ++i) out.write(chip.data(), static_cast<std::streamsize>(chip.size()));
  }
  const auto file = tinct::MappedFile::open(folder / "bands.bin", tinct::MapAccess::normal);
  REQUIRE(file.size() == kChip * kChips);
  long sum = 0;
  for (std::size_t k = 3; k < kChips; k += 37) {
    for (std::size_t i = 0; i < kChip; i += 4096) sum += file.data()[k * kChip + i];
  }
  CHECK(sum > 0);
  CHECK(resident_kb(file.data(), file.size()) >= 4 * kChip / 1024);  // the reads did map the chips
  for (std::size_t k = 3; k < kChips; k += 37) file.release(k * kChip, kChip);
  CHECK(resident_kb(file.data(), file.size()) == 0);
}
