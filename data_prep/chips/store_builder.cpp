#include "chips/store_builder.hpp"

#include "chips/band_storage.hpp"
#include "chips/chip_plan.hpp"
#include "util/version_info.hpp"

namespace tinct {

StoreBuilder::StoreBuilder(const StorePlan& plan, const std::vector<const SceneSpec*>& scenes,
                           const SensorProfile& sensor)
    : plan_(plan),
      sensor_(sensor),
      storage_(storage_for_inputs(scenes, plan.inputs)),
      writer_(plan.output, chip_store_layout(plan.kind, plan.chip_size, plan.inputs, storage_, sensor),
              plan.replace) {}

ChipRecord StoreBuilder::record_of(const SceneSpec& scene, const TargetGrid& grid, int col, int row,
                                   double valid_fraction) const {
  const double half = plan_.chip_size / 2.0;
  ChipRecord record;
  record.index = writer_.chip_count();
  record.scene = scene.id;
  record.col = col;
  record.row = row;
  record.x = grid.geotransform[0] + (col + half) * grid.geotransform[1];
  record.y = grid.geotransform[3] + (row + half) * grid.geotransform[5];
  record.date = scene.date;
  record.valid_fraction = valid_fraction;
  record.block = block_of(record.x, record.y, plan_.block_size);
  return record;
}

const void* StoreBuilder::stored(const std::vector<float>& planes, const std::vector<std::uint8_t>& valid) {
  to_stored_values(planes, valid, storage_, u16_, f32_);
  return storage_ == StorageType::uint16 ? static_cast<const void*>(u16_.data()) : f32_.data();
}

void StoreBuilder::add_chip(const SceneSpec& scene, const TargetGrid& grid, int col, int row,
                            double valid_fraction, const std::vector<float>& planes,
                            const std::vector<std::uint8_t>& valid, const std::uint8_t* colour,
                            const ChipLabel* label) {
  ChipRecord record = record_of(scene, grid, col, row, valid_fraction);
  if (label != nullptr) {
    record.label = label->label;
    record.group = label->group;
    record.source_id = label->source_id;
  }
  writer_.add(record, stored(planes, valid), colour, valid.data());
}

void StoreBuilder::add_chip_awaiting_colour(const SceneSpec& scene, const TargetGrid& grid, int col, int row,
                                            double valid_fraction, const std::vector<float>& planes,
                                            const std::vector<std::uint8_t>& valid) {
  writer_.add_awaiting_colour(record_of(scene, grid, col, row, valid_fraction), stored(planes, valid), valid.data());
}

void StoreBuilder::add_file(const std::string& name, const std::string& contents) {
  writer_.add_file(name, contents);
}

void StoreBuilder::finish(std::vector<StoreScene> scenes, std::vector<std::string> classes) {
  StoreManifest manifest;
  manifest.kind = plan_.kind;
  manifest.chip_size = plan_.chip_size;
  manifest.bands = store_bands(plan_.inputs, storage_, sensor_);
  manifest.colour_encoding = plan_.kind == StoreKind::pairs ? ColourEncoding::cielab8 : ColourEncoding::none;
  manifest.crs = shared_crs(scenes);
  manifest.pixel_size = plan_.pixel_size;
  manifest.scenes = std::move(scenes);
  manifest.classes = std::move(classes);
  manifest.config_hash = plan_.config_hash;
  manifest.tinct_version = tinct_version();
  writer_.finish(std::move(manifest));
}

StoreScene store_scene(const SceneSpec& spec, const TargetGrid& grid) {
  StoreScene entry;
  entry.id = spec.id;
  entry.path = spec.bands.front().file.string();
  entry.date = spec.date;
  entry.crs = grid.crs_wkt;
  entry.notes["grid_width"] = std::to_string(grid.width);
  entry.notes["grid_height"] = std::to_string(grid.height);
  return entry;
}

std::string shared_crs(const std::vector<StoreScene>& scenes) {
  for (const auto& scene : scenes) {
    if (!same_crs(scene.crs, scenes.front().crs)) return "";
  }
  return scenes.empty() ? "" : scenes.front().crs;
}

}  // namespace tinct
