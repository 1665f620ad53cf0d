#include "chips/store_reader.hpp"

#include <limits>
#include <string_view>

#include "chips/store_checksums.hpp"
#include "util/atomic_file.hpp"
#include "util/error.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

std::string count_of(std::int64_t count, const std::string& one, const std::string& many) {
  return std::to_string(count) + " " + (count == 1 ? one : many);
}

// A missing store is a missing input: a usage error (exit 2), as everywhere.
void check_store_folder(const fs::path& store) {
  if (fs::is_directory(store)) return;
  const fs::path aside = aside_folder_of(store);
  if (fs::is_directory(aside)) {
    fail_runtime("store " + store.string() + " not found; " + aside.string() +
                 " holds it, moved aside by a replacement (--force) that was interrupted: run that command "
                 "again, or rename " + aside.string() + " back to " + store.string());
  }
  const fs::path partial = partial_folder_of(store);
  if (fs::exists(partial)) {
    fail_usage("store " + store.string() + " not found; " + partial.string() +
                 " is an unfinished write: build the store again");
  }
  fail_usage("store " + store.string() + " not found; check the path");
}

template <typename Stored>
void apply_scale(const Stored* stored, const StoreBand& band, std::int64_t count, float* out) {
  for (std::int64_t i = 0; i < count; ++i) {
    out[i] = static_cast<float>((static_cast<double>(stored[i]) + band.offset) * band.scale);
  }
}

}  // namespace

StoreReader StoreReader::open(const fs::path& store) {
  check_store_folder(store);
  StoreReader reader;
  reader.path_ = store;
  reader.manifest_ = read_manifest(store / "manifest.yaml");
  reader.layout_ = layout_of(reader.manifest_);
  const int size = reader.chip_size();
  const std::string plane = std::to_string(size) + " x " + std::to_string(size);
  const std::int64_t value_bytes = storage_bytes(reader.layout_.storage);
  reader.bands_ = reader.map_checked(
      "bands.bin", chip_band_bytes(reader.layout_),
      count_of(reader.band_count(), "band", "bands") + " x " + plane + " x " +
          count_of(value_bytes, "byte", "bytes"));
  if (reader.has_colour()) {
    reader.colour_ = reader.map_checked("colour.bin", chip_colour_bytes(reader.layout_), "3 x " + plane + " x 1 byte");
  }
  reader.valid_ = reader.map_checked("valid.bin", chip_valid_bytes(reader.layout_), plane + " x 1 byte");
  reader.chips_csv_ = reader.map_checked("chips.csv", 0, "");
  const std::string_view text(reinterpret_cast<const char*>(reader.chips_csv_.data()),
                              reader.chips_csv_.size());
  const fs::path csv = store / "chips.csv";
  reader.row_offsets_ = index_chip_rows(text, reader.manifest_.kind == StoreKind::labels, csv.string());
  const auto rows = static_cast<std::int64_t>(reader.row_offsets_.size()) - 1;
  if (rows != reader.chip_count()) {
    fail_runtime(csv.string() + " has " + count_of(rows, "row", "rows") +
                 " but the manifest's chip_count is " + std::to_string(reader.chip_count()) +
                 reader.rebuild_hint());
  }
  // After the size and row checks, whose messages say more about a cut or edited store.
  verify_store_checksums(store, reader.manifest_);
  return reader;
}

std::string StoreReader::rebuild_hint() const {
  return "; the store is truncated or was edited: rebuild it with " + rebuild_command(manifest_.kind);
}

// chip_bytes 0: any size (chips.csv, checked by its rows).
MappedFile StoreReader::map_checked(const std::string& name, std::int64_t chip_bytes,
                                    const std::string& chip_shape) const {
  const fs::path file = path_ / name;
  if (!fs::exists(file)) {
    fail_runtime(file.string() + " is missing; the store is incomplete: rebuild it with " +
                 rebuild_command(manifest_.kind));
  }
  MappedFile mapped = MappedFile::open(file, MapAccess::normal);
  if (chip_bytes == 0) return mapped;
  const std::int64_t count = chip_count();
  if (count > std::numeric_limits<std::int64_t>::max() / chip_bytes) {
    fail_runtime(path_.string() + "/manifest.yaml: chip_count " + std::to_string(count) +
                 " is impossibly large" + rebuild_hint());
  }
  const std::int64_t needed = count * chip_bytes;
  if (static_cast<std::int64_t>(mapped.size()) != needed) {
    fail_runtime(file.string() + " is " + std::to_string(mapped.size()) + " bytes but the manifest's " +
                 count_of(count, "chip", "chips") + " x " + chip_shape + " need " +
                 std::to_string(needed) + rebuild_hint());
  }
  return mapped;
}

void StoreReader::check_chip(std::int64_t chip) const {
  if (chip >= 0 && chip < chip_count()) return;
  fail_runtime("store " + path_.string() + ": chip " + std::to_string(chip) +
               " is out of range: the store holds " + count_of(chip_count(), "chip", "chips"));
}

ChipRecord StoreReader::record(std::int64_t chip) const {
  check_chip(chip);
  const std::size_t begin = row_offsets_[chip];
  const std::string_view row(reinterpret_cast<const char*>(chips_csv_.data()) + begin,
                             row_offsets_[chip + 1] - begin);
  const std::string where = (path_ / "chips.csv").string() + " (chip " + std::to_string(chip) + ")";
  return parse_chip_row(row, manifest_.kind == StoreKind::labels, where);
}

const std::uint16_t* StoreReader::bands_u16(std::int64_t chip) const {
  check_chip(chip);
  if (layout_.storage != StorageType::uint16) {
    fail_runtime("store " + path_.string() + " holds float32 bands: read them with bands_f32 or read_reflectance");
  }
  return reinterpret_cast<const std::uint16_t*>(bands_.data() + chip * chip_band_bytes(layout_));
}

const float* StoreReader::bands_f32(std::int64_t chip) const {
  check_chip(chip);
  if (layout_.storage != StorageType::float32) {
    fail_runtime("store " + path_.string() + " holds uint16 bands: read them with bands_u16 or read_reflectance");
  }
  return reinterpret_cast<const float*>(bands_.data() + chip * chip_band_bytes(layout_));
}

void StoreReader::read_reflectance(std::int64_t chip, float* out) const {
  check_chip(chip);
  const std::int64_t area = chip_valid_bytes(layout_);
  const std::uint8_t* stored = bands_.data() + chip * chip_band_bytes(layout_);
  for (std::size_t band = 0; band < layout_.bands.size(); ++band) {
    float* plane = out + band * area;
    if (layout_.storage == StorageType::uint16) {
      apply_scale(reinterpret_cast<const std::uint16_t*>(stored) + band * area, layout_.bands[band], area, plane);
    } else {
      apply_scale(reinterpret_cast<const float*>(stored) + band * area, layout_.bands[band], area, plane);
    }
  }
}

const std::uint8_t* StoreReader::colour(std::int64_t chip) const {
  check_chip(chip);
  if (!has_colour()) fail_runtime("store " + path_.string() + " has no colour (colour_encoding: none)");
  return colour_.data() + chip * chip_colour_bytes(layout_);
}

const std::uint8_t* StoreReader::valid(std::int64_t chip) const {
  check_chip(chip);
  return valid_.data() + chip * chip_valid_bytes(layout_);
}

void StoreReader::prefetch(std::int64_t first, std::int64_t count) const {
  if (count <= 0) return;
  check_chip(first);
  check_chip(first + count - 1);
  const auto advise = [&](const MappedFile& file, std::int64_t chip_bytes) {
    file.will_need(static_cast<std::size_t>(first * chip_bytes), static_cast<std::size_t>(count * chip_bytes));
  };
  advise(bands_, chip_band_bytes(layout_));
  if (has_colour()) advise(colour_, chip_colour_bytes(layout_));
  advise(valid_, chip_valid_bytes(layout_));
}

void StoreReader::release(std::int64_t chip) const {
  check_chip(chip);
  const auto drop = [&](const MappedFile& file, std::int64_t chip_bytes) {
    file.release(static_cast<std::size_t>(chip * chip_bytes), static_cast<std::size_t>(chip_bytes));
  };
  drop(bands_, chip_band_bytes(layout_));
  if (has_colour()) drop(colour_, chip_colour_bytes(layout_));
  drop(valid_, chip_valid_bytes(layout_));
}

}  // namespace tinct
