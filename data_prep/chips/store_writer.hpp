// Writes a chip store chip by chip into NAME.partial/ and renames it to NAME in
// finish(), so a store is either complete or absent. Pixels stream to the .bin
// files through large buffers and are never held, hashed as they go out (the
// manifest's checksums); a uint16 store counts its band statistics' histograms as
// chips arrive, a float32 store's finish() takes them in passes over the written
// bands.bin through a read-only map.
#pragma once

#include <cstdint>
#include <filesystem>
#include <memory>
#include <optional>
#include <set>
#include <string>
#include <vector>

#include "chips/band_statistics.hpp"
#include "chips/buffered_file.hpp"
#include "chips/chip_record.hpp"
#include "chips/store_manifest.hpp"
#include "util/atomic_file.hpp"

namespace tinct {

class StoreWriter {
 public:
  // Fails (usage) when `target` exists and `replace` is not set, leaving it untouched.
  StoreWriter(std::filesystem::path target, StoreLayout layout, bool replace);
  StoreWriter(const StoreWriter&) = delete;
  StoreWriter& operator=(const StoreWriter&) = delete;
  ~StoreWriter();  // without finish(): removes NAME.partial/

  // bands: bands x size x size values of the store's storage type; colour: 3 x size x
  // size cielab8 codes, or nullptr when the store has no colour; valid: size x size,
  // 1 for valid pixels. record.index must be the chip's position (chip_count()).
  void add(const ChipRecord& record, const void* bands, const std::uint8_t* colour,
           const std::uint8_t* valid);
  // For a writer that knows colour only after a whole pass (pair fits the colour stretch
  // from the pixels it reads once): adds a chip of a colour store without its colour;
  // add_colour() then gives the colours in chip order, all before the next add() and finish().
  void add_awaiting_colour(const ChipRecord& record, const void* bands, const std::uint8_t* valid);
  void add_colour(const std::uint8_t* colour);
  std::int64_t chips_awaiting_colour() const { return chip_count_ - colour_count_; }

  // A further file inside the store (e.g. a label store's dropped.csv), written
  // atomically; it becomes part of the store when finish() renames it into place.
  void add_file(const std::string& name, const std::string& contents);

  // Takes crs, pixel_size, classes, scenes, config_hash and tinct_version (filled in
  // when empty) from `header_fields`; sets everything else. An empty crs becomes the
  // scenes' CRS when all their WKT texts are equal (a caller that knows two texts
  // name one CRS sets it itself). Without any chip added it fails: "no chips to write".
  void finish(StoreManifest header_fields);

  std::int64_t chip_count() const { return chip_count_; }
  const std::filesystem::path& target() const { return folder_.target(); }

 private:
  enum class State { open, failed, finished };
  void require_open(const char* step) const;
  void append(const ChipRecord& record, const void* bands, const std::uint8_t* colour, const std::uint8_t* valid,
              bool colour_later);
  StoreManifest complete_manifest(StoreManifest manifest) const;
  void check_chips_against(const StoreManifest& manifest) const;
  std::vector<BandStatistics> statistics_of_written() const;

  StoreLayout layout_;    // checked before folder_ creates anything
  PartialFolder folder_;  // before the files: destroyed after they are closed
  std::int64_t band_bytes_ = 0;
  std::int64_t colour_bytes_ = 0;
  std::int64_t valid_bytes_ = 0;
  std::unique_ptr<BufferedFile> bands_;
  std::unique_ptr<BufferedFile> colour_;
  std::unique_ptr<BufferedFile> valid_;
  std::unique_ptr<BufferedFile> chips_csv_;
  std::optional<BandHistograms> histograms_;  // uint16 storage
  std::string row_;
  std::set<std::string> scenes_seen_;
  std::set<std::string> labels_seen_;
  std::int64_t chip_count_ = 0;
  std::int64_t colour_count_ = 0;
  State state_ = State::open;
};

}  // namespace tinct
