// Opens a chip store for reading: the manifest, the chips.csv rows and read-only
// maps of the .bin files, each checked against the manifest on open, so that a
// truncated or edited store fails at once and not mid-training. Chips are read
// through the maps; nothing loads a whole store.
#pragma once

#include <cstdint>
#include <filesystem>
#include <string>
#include <vector>

#include "chips/chip_record.hpp"
#include "chips/mapped_file.hpp"
#include "chips/store_manifest.hpp"

namespace tinct {

class StoreReader {
 public:
  // Fails (runtime) on a missing store or file, a newer format, or any file whose
  // size or row count disagrees with the manifest.
  static StoreReader open(const std::filesystem::path& store);
  StoreReader(StoreReader&&) noexcept = default;
  StoreReader& operator=(StoreReader&&) noexcept = default;
  StoreReader(const StoreReader&) = delete;
  StoreReader& operator=(const StoreReader&) = delete;
  ~StoreReader() = default;  // the maps unmap themselves

  const StoreManifest& manifest() const { return manifest_; }
  const std::filesystem::path& path() const { return path_; }
  std::int64_t chip_count() const { return manifest_.chip_count; }
  int chip_size() const { return manifest_.chip_size; }
  int band_count() const { return static_cast<int>(manifest_.bands.size()); }
  bool has_colour() const { return layout_.has_colour; }

  // Every index is bounds-checked: "chip 17 is out of range: the store holds 12 chips".
  ChipRecord record(std::int64_t chip) const;
  const std::uint16_t* bands_u16(std::int64_t chip) const;  // (bands, size, size)
  const float* bands_f32(std::int64_t chip) const;          // (bands, size, size)
  // Writes bands x size x size reflectances, (stored + offset) * scale, to `out`.
  void read_reflectance(std::int64_t chip, float* out) const;
  const std::uint8_t* colour(std::int64_t chip) const;  // (3, size, size) cielab8
  const std::uint8_t* valid(std::int64_t chip) const;   // (size, size), 1 = valid
  // Starts reading chips first..first+count-1 from disk (for the next batch).
  void prefetch(std::int64_t first, std::int64_t count) const;
  // Hands a chip's mapped pages back once it has been copied out, so that reading
  // a store larger than memory keeps the resident set small (the page cache may
  // still hold them).
  void release(std::int64_t chip) const;

 private:
  StoreReader() = default;
  void check_chip(std::int64_t chip) const;
  MappedFile map_checked(const std::string& name, std::int64_t chip_bytes,
                         const std::string& chip_shape) const;
  std::string rebuild_hint() const;

  std::filesystem::path path_;
  StoreManifest manifest_;
  StoreLayout layout_;
  MappedFile bands_;
  MappedFile colour_;
  MappedFile valid_;
  MappedFile chips_csv_;
  std::vector<std::size_t> row_offsets_;  // chip_count + 1 offsets into chips.csv
};

}  // namespace tinct
