// manifest.yaml of a chip store: what the .bin files hold (layout, bands, storage,
// colour encoding), where the chips came from (CRS, scenes) and the per-band
// statistics the trainer normalises with. The byte layout itself is in FORMAT.md.
#pragma once

#include <cstdint>
#include <filesystem>
#include <map>
#include <string>
#include <vector>

#if !defined(__BYTE_ORDER__) || __BYTE_ORDER__ != __ORDER_LITTLE_ENDIAN__
#error "chip stores are little-endian and are mapped as they lie: build tinct on a little-endian host"
#endif

namespace tinct {

inline constexpr int kStoreFormatVersion = 1;

enum class StoreKind { pairs, labels };
enum class StorageType { uint16, float32 };
enum class ColourEncoding { none, cielab8 };  // cielab8: L*255/100, a+128, b+128

struct StoreBand {
  std::string name;
  StorageType storage = StorageType::uint16;
  double scale = 1.0;  // reflectance = (stored + offset) * scale
  double offset = 0.0;
};

// Over valid pixels, in reflectance units; std is the population std.
struct BandStatistics {
  std::int64_t count = 0;
  double mean = 0, std = 0, p02 = 0, p98 = 0;
};

struct StoreScene {
  std::string id;    // what chips.csv's scene column holds
  std::string path;
  std::string date;  // ISO 8601
  std::string crs;   // WKT
  std::map<std::string, std::string> notes;  // e.g. colour_shift_dx_px, colour_shift_dx_m
};

struct StoreManifest {
  int format_version = kStoreFormatVersion;
  StoreKind kind = StoreKind::pairs;
  int chip_size = 0;
  std::vector<StoreBand> bands;
  ColourEncoding colour_encoding = ColourEncoding::cielab8;
  std::string crs;  // WKT shared by all scenes; "" when they differ
  double pixel_size = 0;
  std::int64_t chip_count = 0;
  std::vector<BandStatistics> statistics;  // one per band, in band order
  std::vector<std::string> classes;        // labels kind only
  std::vector<StoreScene> scenes;
  std::string config_hash;
  std::string tinct_version;
  // SHA-256 (hex) of bands.bin, colour.bin, valid.bin and chips.csv, checked when the
  // store is opened; empty in stores written before checksums were.
  std::map<std::string, std::string> checksums;
};

// The shape of the .bin files, which is all a writer needs before the first chip.
struct StoreLayout {
  StoreKind kind = StoreKind::pairs;
  int chip_size = 0;
  std::vector<StoreBand> bands;
  bool has_colour = true;
  StorageType storage = StorageType::uint16;
};

StoreLayout layout_of(const StoreManifest& manifest);
// Fails (runtime) on an empty band list, duplicate names, mixed storage or a bad scale.
void check_layout(const StoreLayout& layout, const std::string& where);

std::int64_t storage_bytes(StorageType storage);
// Bytes of one chip in bands.bin, colour.bin and valid.bin.
std::int64_t chip_band_bytes(const StoreLayout& layout);
std::int64_t chip_colour_bytes(const StoreLayout& layout);
std::int64_t chip_valid_bytes(const StoreLayout& layout);

std::string to_string(StoreKind kind);
std::string to_string(StorageType storage);
std::string to_string(ColourEncoding encoding);
// The command that builds a store of this kind, for "rebuild it with ..." hints.
std::string rebuild_command(StoreKind kind);

std::string manifest_yaml(const StoreManifest& manifest);
// Fails (runtime) naming the file and key on a missing or bad key, and asks for a
// newer tinct when the store's format_version is newer than this build reads.
StoreManifest read_manifest(const std::filesystem::path& file);

}  // namespace tinct
