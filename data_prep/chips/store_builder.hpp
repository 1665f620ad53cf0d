// What `tinct pair` and `tinct label` share when they build a store: the layout
// from the input bands, a chip record from a window of a scene's grid (centre in
// map units, date, spatial block, index), stored values from the read planes, one
// CRS for the manifest when every scene's CRS agrees, and the manifest's finish.
#pragma once

#include <cstdint>
#include <filesystem>
#include <string>
#include <vector>

#include "chips/store_writer.hpp"
#include "raster/scene_spec.hpp"
#include "raster/sensor_profile.hpp"
#include "raster/target_grid.hpp"

namespace tinct {

struct StorePlan {
  std::filesystem::path output;
  bool replace = false;
  StoreKind kind = StoreKind::pairs;
  int chip_size = 0;
  std::vector<std::string> inputs;
  double pixel_size = 0;
  double block_size = 0;  // metres, for the chip's spatial block
  std::string config_hash;
};

// A label store's fields of a chip.
struct ChipLabel {
  std::string label, group, source_id;
};

class StoreBuilder {
 public:
  // Decides the storage type from the scenes' input bands and opens the writer
  // (which refuses an existing store without replace, or a second writer).
  StoreBuilder(const StorePlan& plan, const std::vector<const SceneSpec*>& scenes, const SensorProfile& sensor);

  StorageType storage() const { return storage_; }
  std::int64_t chip_count() const { return writer_.chip_count(); }

  // The chip whose top-left pixel is (col, row) of `grid`: planes holds the input
  // bands' values (inputs x size x size, NaN or anything where valid is 0), colour
  // cielab8 codes or nullptr for label stores.
  void add_chip(const SceneSpec& scene, const TargetGrid& grid, int col, int row, double valid_fraction,
                const std::vector<float>& planes, const std::vector<std::uint8_t>& valid,
                const std::uint8_t* colour, const ChipLabel* label = nullptr);

  // pair's single pass: the chip now, its colour codes later, in chip order (see
  // StoreWriter::add_awaiting_colour).
  void add_chip_awaiting_colour(const SceneSpec& scene, const TargetGrid& grid, int col, int row,
                                double valid_fraction, const std::vector<float>& planes,
                                const std::vector<std::uint8_t>& valid);
  void add_colour(const std::uint8_t* colour) { writer_.add_colour(colour); }

  // A file of its own inside the store (e.g. label's dropped.csv), written atomically.
  void add_file(const std::string& name, const std::string& contents);

  // Writes the manifest (bands, CRS when the scenes agree, pixel size, classes) and
  // renames the store into place.
  void finish(std::vector<StoreScene> scenes, std::vector<std::string> classes = {});

 private:
  ChipRecord record_of(const SceneSpec& scene, const TargetGrid& grid, int col, int row, double valid_fraction) const;
  const void* stored(const std::vector<float>& planes, const std::vector<std::uint8_t>& valid);

  StorePlan plan_;
  const SensorProfile& sensor_;
  StorageType storage_;
  StoreWriter writer_;
  std::vector<std::uint16_t> u16_;
  std::vector<float> f32_;
};

// A manifest scene entry: id, first band file, date, the grid's CRS and size.
StoreScene store_scene(const SceneSpec& spec, const TargetGrid& grid);

// The scenes' CRS when every one names the same system, else "".
std::string shared_crs(const std::vector<StoreScene>& scenes);

}  // namespace tinct
