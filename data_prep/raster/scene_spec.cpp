#include "raster/scene_spec.hpp"

#include <algorithm>
#include <cmath>
#include <set>

#include "raster/band_settings.hpp"
#include "raster/raster.hpp"
#include "raster/scene_date.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

std::vector<std::string> stack_band_names(const ConfigNode& item, const Raster& stack,
                                          const SensorProfile& profile) {
  if (item.has("bands")) {
    const auto names = item.texts("bands");
    if (static_cast<int>(names.size()) > stack.band_count()) {
      item.fail("bands", std::to_string(names.size()) + " names given but " + stack.path().string() +
                             " has " + std::to_string(stack.band_count()) + " bands");
    }
    require_profile_bands(item, "bands", names, profile);
    return names;
  }
  item.allow("bands");
  std::vector<std::string> described;
  for (int i = 1; i <= stack.band_count(); ++i) {
    if (profile.band(stack.band(i).description)) described.push_back(stack.band(i).description);
  }
  if (static_cast<int>(described.size()) == stack.band_count()) return described;
  if (stack.band_count() == static_cast<int>(profile.bands.size())) return profile.band_names();
  item.fail("path", stack.path().string() + " has " + std::to_string(stack.band_count()) +
                        " bands, the profile " + profile.name + " lists " +
                        std::to_string(profile.bands.size()) +
                        "; name the stack's bands in order with bands: [...]");
}

std::vector<SceneBand> read_stack(const ConfigNode& item, const SensorProfile& profile, fs::path& first) {
  first = item.path("path", true);
  const Raster stack = Raster::open(first);
  std::vector<SceneBand> bands;
  const auto names = stack_band_names(item, stack, profile);
  for (std::size_t i = 0; i < names.size(); ++i) {
    bands.push_back({names[i], first, static_cast<int>(i) + 1});
  }
  return bands;
}

std::vector<SceneBand> read_files(const ConfigNode& item, const SensorProfile& profile, fs::path& first) {
  const ConfigNode files = item.section("files");
  std::vector<SceneBand> bands;
  for (const auto& name : files.keys()) {
    require_profile_bands(files, name, {name}, profile);
    bands.push_back({name, files.path(name, true), 1});
  }
  if (bands.empty()) item.fail("files", "lists no band files");
  first = bands.front().file;
  return bands;
}

std::optional<SceneMask> read_mask(const ConfigNode& item) {
  if (!item.has("mask")) {
    item.allow("mask");
    return std::nullopt;
  }
  const ConfigNode node = item.section("mask");
  SceneMask mask;
  mask.file = node.path("path", true);
  mask.band = static_cast<int>(node.integer("band", 1, 1));
  mask.drop = node.numbers("drop");
  node.finish();
  return mask;
}

}  // namespace

const SceneBand* SceneSpec::band(const std::string& wanted) const {
  for (const auto& b : bands) {
    if (b.name == wanted) return &b;
  }
  return nullptr;
}

SceneSpec read_scene_spec(const ConfigNode& item, const SensorProfile& profile, bool date_required) {
  SceneSpec spec;
  const bool stacked = item.has("path");
  if (stacked == item.has("files")) {
    item.fail(stacked ? "" : "path", "give either path: (one stacked raster) or files: (band name -> file), "
                                     "not both");
  }
  fs::path first;
  spec.bands = stacked ? read_stack(item, profile, first) : read_files(item, profile, first);
  if (!stacked) {
    item.allow("path");
    item.allow("bands");
  }
  spec.id = item.text("id", first.stem().string());
  if (item.has("date")) {
    const auto date = parse_date(item.text("date"));
    if (!date) item.fail("date", "expected a date as YYYY-MM-DD");
    spec.date = *date;
  } else if (const auto date = date_from_metadata(Raster::open(first))) {
    spec.date = *date;
    item.text("date", spec.date);
  } else if (date_required) {
    item.fail("date", "required: " + first.string() + " carries no acquisition date; set date: YYYY-MM-DD");
  } else {
    item.allow("date");  // undated: fine for pretraining, which matches no labels
  }
  spec.mask = read_mask(item);
  if (item.has("colour")) {
    spec.colour_raster = item.path("colour", true);
  } else {
    item.allow("colour");
  }
  item.finish();
  return spec;
}

std::optional<double> shared_pixel_size(const std::vector<SceneSpec>& scenes) {
  std::optional<double> shared;
  const auto differs = [](double a, double b) { return std::fabs(a - b) > 1e-9 * std::max(a, b); };
  for (const SceneSpec& scene : scenes) {
    std::set<std::filesystem::path> files;
    for (const SceneBand& band : scene.bands) files.insert(band.file);
    for (const auto& file : files) {
      const double size = std::fabs(Raster::open(file).geotransform()[1]);
      if (shared && differs(*shared, size)) return std::nullopt;
      shared = size;
    }
  }
  return shared;
}

}  // namespace tinct
