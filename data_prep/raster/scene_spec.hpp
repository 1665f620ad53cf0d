// What a config says a scene is: where each band comes from (a band of a stacked
// raster, or a file per band at its own resolution), its date, and an optional
// mask raster with the values to drop (e.g. cloud and shadow classes).
#pragma once

#include <filesystem>
#include <optional>
#include <string>
#include <vector>

#include "raster/sensor_profile.hpp"
#include "util/config_node.hpp"

namespace tinct {

struct SceneBand {
  std::string name;  // the profile's band name
  std::filesystem::path file;
  int index = 1;  // 1-based band of `file`
};

struct SceneMask {
  std::filesystem::path file;
  int band = 1;
  std::vector<double> drop;  // mask values whose pixels are left out
};

struct SceneSpec {
  std::string id;
  std::vector<SceneBand> bands;
  std::string date;  // YYYY-MM-DD; "" = undated (pair stores only)
  std::optional<SceneMask> mask;
  std::optional<std::filesystem::path> colour_raster;

  const SceneBand* band(const std::string& name) const;
};

// Reads one entry of a config's `scenes:` list. Either `path:` (a stack, whose
// bands are named by `bands:`, by matching band descriptions, or in profile order)
// or `files:` (band name -> single-band file). Files must exist; the date comes
// from `date:` or the raster's metadata. Where dates are matched (labels) a scene
// without one is an error; pretraining needs none, so `date_required` false lets a
// scene stay undated.
SceneSpec read_scene_spec(const ConfigNode& item, const SensorProfile& profile, bool date_required = true);

// The pixel size every band file of every scene shares, or nullopt when they differ
// (e.g. Sentinel-2 bands at 10, 20 and 60 m): the default grid, so nothing is
// resampled that need not be.
std::optional<double> shared_pixel_size(const std::vector<SceneSpec>& scenes);

}  // namespace tinct
