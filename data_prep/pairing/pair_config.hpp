// The settings of `tinct pair`, read from a YAML config (config: pair): the
// sensor, the scenes, the grid, which bands are inputs, where the colour comes
// from, the co-registration limits and the chip plan. Every key has a default
// except sensor, scenes, inputs and output. Scenes may be undated (pretraining
// matches no labels).
#pragma once

#include <filesystem>
#include <string>
#include <vector>

#include "chips/chip_plan.hpp"
#include "colour/stretch.hpp"
#include "raster/resampling.hpp"
#include "raster/scene_spec.hpp"
#include "raster/sensor_profile.hpp"
#include "util/config_node.hpp"

namespace tinct {

struct ColourSettings {
  bool from_raster = false;          // each scene's `colour:` raster instead of three bands
  std::vector<std::string> bands;    // red, green, blue band names (from bands)
  // stretch: none keeps display-ready 8-bit colour rasters as they are (the default
  // when every colour raster is Byte); otherwise every scene's colour is stretched.
  bool stretched = true;
  StretchSettings stretch;
  bool allow_input_overlap = false;  // inputs may include the colour bands (trivial task)
};

struct CoregistrationSettings {
  int window = 256;         // pixels per correlation window
  int windows = 9;          // windows per scene
  double warn_px = 0.5;
  double limit_px = 2.0;
  bool allow_large_shift = false;
};

struct PairConfig {
  SensorProfile sensor;
  std::vector<SceneSpec> scenes;
  double resolution = 0;  // metres; the profile's reference resolution by default
  AlignSettings align;
  std::vector<std::string> inputs;
  ColourSettings colour;
  CoregistrationSettings coregistration;
  ChipPlanSettings chips;
  std::filesystem::path output;
};

// Reads and checks the whole config (files exist, bands known, values in range);
// `root` is the config's top level. Calls finish() on every section.
PairConfig read_pair_config(const ConfigNode& root);

}  // namespace tinct
