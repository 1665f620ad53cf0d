// Tiny chip stores for tests that train: a pair store whose colour follows its bands
// and a label store whose class shows in its bands, both made of smooth deterministic
// patterns (no random numbers), so a seeded run gives the same losses on every machine
// with the same LibTorch. Invented data, for tests only.
#pragma once

#include <cmath>
#include <cstdint>
#include <filesystem>
#include <string>
#include <vector>

#include "chips/store_writer.hpp"

namespace tinct::testing {

constexpr int kTinyChip = 16;

// count chips of 16 x 16 px, 3 bands (uint16, scale 1e-4); chip c lies in block c / 4.
inline std::filesystem::path write_tiny_pair_store(const std::filesystem::path& path, int count) {
  StoreLayout layout;
  layout.chip_size = kTinyChip;
  layout.bands = {{"red_edge", StorageType::uint16, 1e-4, 0},
                  {"nir", StorageType::uint16, 1e-4, 0},
                  {"swir", StorageType::uint16, 1e-4, 0}};
  StoreWriter writer(path, layout, false);
  const int area = kTinyChip * kTinyChip;
  for (int c = 0; c < count; ++c) {
    std::vector<std::uint16_t> bands(3 * area);
    std::vector<std::uint8_t> colour(3 * area), valid(area, 1);
    for (int p = 0; p < area; ++p) {
      const double u = std::sin(0.31 * (p % kTinyChip) + 0.7 * c) * std::cos(0.23 * (p / kTinyChip) - 0.4 * c);
      const double v = std::cos(0.17 * (p % kTinyChip + p / kTinyChip) + 1.3 * c);
      for (int b = 0; b < 3; ++b) bands[b * area + p] = static_cast<std::uint16_t>(2000 + 900 * u + 400 * b * v);
      colour[p] = static_cast<std::uint8_t>(120 + 80 * u);
      colour[area + p] = static_cast<std::uint8_t>(128 + 30 * v);
      colour[2 * area + p] = static_cast<std::uint8_t>(128 - 20 * u * v);
    }
    valid[static_cast<std::size_t>(c % area)] = 0;
    ChipRecord record;
    record.index = c;
    record.scene = "s";
    record.x = 160.0 * c;
    record.date = "2026-01-01";
    record.valid_fraction = 255.0 / 256;
    record.block = std::to_string(c / 4) + "_0";
    writer.add(record, bands.data(), colour.data(), valid.data());
  }
  StoreManifest header;
  header.pixel_size = 10;
  header.scenes = {{"s", "scene.tif", "2026-01-01", "LOCAL_CS[\"test\"]", {}}};
  writer.finish(header);
  return path;
}

// side x side chips on a grid of points 100 m apart, 3 bands like the pair store's;
// class "wet" (every third chip, plus chips on the diagonal) has lower NIR and SWIR.
inline std::filesystem::path write_tiny_label_store(const std::filesystem::path& path, int side) {
  StoreLayout layout;
  layout.kind = StoreKind::labels;
  layout.chip_size = kTinyChip;
  layout.has_colour = false;
  layout.bands = {{"red_edge", StorageType::uint16, 1e-4, 0},
                  {"nir", StorageType::uint16, 1e-4, 0},
                  {"swir", StorageType::uint16, 1e-4, 0}};
  StoreWriter writer(path, layout, false);
  const int area = kTinyChip * kTinyChip;
  for (int i = 0; i < side * side; ++i) {
    const bool wet = i % 3 == 0 || i % side == i / side;
    std::vector<std::uint16_t> bands(3 * area);
    std::vector<std::uint8_t> valid(area, 1);
    for (int p = 0; p < area; ++p) {
      const double u = std::sin(0.29 * (p % kTinyChip) + 0.9 * i) * std::cos(0.21 * (p / kTinyChip) + 0.3 * i);
      for (int b = 0; b < 3; ++b) {
        const double drop = wet && b > 0 ? 900 : 0;
        bands[b * area + p] = static_cast<std::uint16_t>(2400 + 500 * u + 150 * b - drop);
      }
    }
    ChipRecord record;
    record.index = i;
    record.scene = "s";
    record.x = 100.0 * (i % side) + 50;
    record.y = 100.0 * (i / side) + 50;
    record.date = "2026-01-01";
    record.valid_fraction = 1;
    record.block = "0_0";
    record.label = wet ? "wet" : "dry";
    record.group = "g" + std::to_string(i / 2);
    record.source_id = "site" + std::to_string(i);
    writer.add(record, bands.data(), nullptr, valid.data());
  }
  StoreManifest header;
  header.kind = StoreKind::labels;
  header.pixel_size = 10;
  header.classes = {"dry", "wet"};
  header.scenes = {{"s", "scene.tif", "2026-01-01", "LOCAL_CS[\"test\"]", {}}};
  writer.finish(header);
  return path;
}

}  // namespace tinct::testing
