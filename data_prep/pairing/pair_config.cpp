#include "pairing/pair_config.hpp"

#include <algorithm>

#include "raster/band_settings.hpp"
#include "raster/processing_baseline.hpp"
#include "raster/raster.hpp"
#include "util/log.hpp"

namespace tinct {
namespace {

// The colour rasters that are not Byte (display-ready 8-bit colour is Byte).
std::vector<std::string> non_byte_rasters(const std::vector<SceneSpec>& scenes) {
  std::vector<std::string> found;
  for (const SceneSpec& scene : scenes) {
    if (!scene.colour_raster) continue;
    const std::string type = Raster::open(*scene.colour_raster).band(1).data_type;
    if (type != "Byte") found.push_back(scene.colour_raster->filename().string() + " (" + type + ")");
  }
  return found;
}

// stretch: {low, high, gamma} (applied to every source), or none (8-bit colour rasters
// as they are; their default). The resolved config says which one a run uses.
void read_stretch(const ConfigNode& node, ColourSettings& colour, const std::vector<SceneSpec>& scenes) {
  const std::vector<std::string> not_byte = colour.from_raster ? non_byte_rasters(scenes) : std::vector<std::string>{};
  const bool all_byte = colour.from_raster && not_byte.empty();
  if (node.peek("stretch") == std::optional<std::string>("none") || (!node.has("stretch") && all_byte)) {
    if (!all_byte) {
      node.fail("stretch", "none keeps colour values as they are, which suits only 8-bit (Byte) colour rasters; " +
                               std::string(colour.from_raster ? "not " + not_byte.front() : "colour from bands") +
                               "; give stretch: {low: 2, high: 98} or leave it out");
    }
    node.text("stretch", "none");
    colour.stretched = false;
    return;
  }
  const ConfigNode stretch = node.section("stretch");
  colour.stretch.low_percent = stretch.number("low", 2.0, 0.0, 100.0);
  colour.stretch.high_percent = stretch.number("high", 98.0, 0.0, 100.0);
  colour.stretch.gamma = stretch.number("gamma", 1.0, 0.01, 100.0);
  if (colour.stretch.high_percent <= colour.stretch.low_percent) {
    stretch.fail("high", "must be above low");
  }
  stretch.finish();
}

ColourSettings read_colour(const ConfigNode& node, const std::vector<std::string>& inputs,
                           const SensorProfile& profile, const std::vector<SceneSpec>& scenes) {
  ColourSettings colour;
  colour.from_raster = node.choice("source", {"bands", "raster"}, "bands") == "raster";
  if (!colour.from_raster) {
    colour.bands = node.texts("bands");
    if (colour.bands.size() != 3) node.fail("bands", "expected three band names: red, green, blue");
    require_profile_bands(node, "bands", colour.bands, profile);
  } else {
    node.allow("bands");
  }
  read_stretch(node, colour, scenes);
  colour.allow_input_overlap = node.flag("allow_input_overlap", false);
  node.finish();
  for (const auto& band : colour.bands) {
    if (std::find(inputs.begin(), inputs.end(), band) == inputs.end()) continue;
    if (!colour.allow_input_overlap) {
      node.fail("bands", "input band " + band + " is also a colour band, so predicting the colour "
                         "is trivial and teaches nothing; drop it from inputs, or set "
                         "colour.allow_input_overlap: true if you mean it");
    }
    log::warning("input band " + band + " is also a colour band: the pretext task is trivial");
  }
  return colour;
}

CoregistrationSettings read_coregistration(const ConfigNode& node) {
  CoregistrationSettings s;
  s.window = static_cast<int>(node.integer("window", 256, 32, 4096));
  s.windows = static_cast<int>(node.integer("windows", 9, 1, 100));
  s.warn_px = node.number("warn_px", 0.5, 0.0);
  s.limit_px = node.number("limit_px", 2.0, 0.0);
  s.allow_large_shift = node.flag("allow_large_shift", false);
  node.finish();
  return s;
}

ChipPlanSettings read_chips(const ConfigNode& node) {
  ChipPlanSettings s;
  s.size = read_chip_size(node);
  s.stride = static_cast<int>(node.integer("stride", s.size, 1, 4096));
  s.random = node.choice("layout", {"grid", "random"}, "grid") == "random";
  s.random_count = static_cast<int>(node.integer("count", 500, 1));
  s.min_valid = node.number("min_valid", 0.9, 0.0, 1.0);
  s.max_per_scene = static_cast<int>(node.integer("max_per_scene", 0, 0));
  s.block_size = node.number("block_size", 5000.0, 1e-6);
  s.seed = static_cast<std::uint64_t>(node.integer("seed", 0, 0));
  node.finish();
  return s;
}

}  // namespace

// Scenes are read before the grid and the colour: their pixel size is the grid's
// default, and their colour rasters' type decides the default stretch.
PairConfig read_pair_config(const ConfigNode& root) {
  PairConfig config;
  config.sensor = read_sensor_reference(root, "sensor");
  config.output = root.path("output", false);
  config.inputs = read_input_bands(root, config.sensor);
  const auto items = root.items("scenes");
  if (items.empty()) root.fail("scenes", "required: list at least one scene");
  for (const auto& item : items) {
    SceneSpec scene = read_scene_spec(item, config.sensor, /*date_required=*/false);
    for (const auto& earlier : config.scenes) {
      if (earlier.id == scene.id) item.fail("id", "scene id \"" + scene.id + "\" is used twice; set id:");
    }
    config.scenes.push_back(std::move(scene));
  }
  settle_processing_baseline(config.sensor, config.scenes, items);
  config.align = read_grid_settings(root.section("grid"), config.sensor, shared_pixel_size(config.scenes),
                                    config.resolution);
  config.colour = read_colour(root.section("colour"), config.inputs, config.sensor, config.scenes);
  config.coregistration = read_coregistration(root.section("coregistration"));
  config.chips = read_chips(root.section("chips"));
  for (std::size_t i = 0; i < items.size(); ++i) {
    const SceneSpec& scene = config.scenes[i];
    for (const auto& band : config.inputs) {
      if (!scene.band(band)) items[i].fail("", "scene " + scene.id + " has no input band " + band);
    }
    for (const auto& band : config.colour.bands) {
      if (!scene.band(band)) items[i].fail("", "scene " + scene.id + " has no colour band " + band);
    }
    if (config.colour.from_raster && !scene.colour_raster) {
      items[i].fail("colour", "required: colour.source is raster, so each scene needs colour: PATH");
    }
  }
  return config;
}

}  // namespace tinct
