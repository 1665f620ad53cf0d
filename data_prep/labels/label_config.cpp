#include "labels/label_config.hpp"

#include <algorithm>
#include <cctype>
#include <cmath>
#include <cstdlib>

#include "raster/band_settings.hpp"
#include "raster/processing_baseline.hpp"
#include "raster/scene_date.hpp"
#include "util/log.hpp"
#include "util/nearest_name.hpp"

namespace tinct {
namespace {

bool ends_with_csv(const std::filesystem::path& path) {
  std::string extension = path.extension().string();
  std::transform(extension.begin(), extension.end(), extension.begin(),
                 [](unsigned char c) { return static_cast<char>(std::tolower(c)); });
  return extension == ".csv";
}

// Keys that belong to another kind of source: an error when given, known otherwise.
void refuse(const ConfigNode& node, const std::vector<std::string>& keys, const std::string& why) {
  for (const auto& key : keys) {
    if (node.has(key)) node.fail(key, why);
    node.allow(key);
  }
}

std::string optional_text(const ConfigNode& node, const std::string& key) {
  if (node.has(key)) return node.text(key);
  node.allow(key);
  return "";
}

std::vector<std::pair<double, std::string>> read_raster_classes(const ConfigNode& node) {
  std::vector<std::pair<double, std::string>> names;
  if (!node.has("raster_classes")) {
    node.allow("raster_classes");
    return names;
  }
  if (!node.is_mapping("raster_classes")) {
    node.fail("raster_classes", "expected a mapping of raster value -> class name, e.g. {1: breeding, 2: dry}");
  }
  const ConfigNode mapping = node.section("raster_classes");
  for (const auto& key : mapping.keys()) {
    char* end = nullptr;
    const double value = std::strtod(key.c_str(), &end);
    if (key.empty() || *end != '\0' || !std::isfinite(value)) {
      mapping.fail(key, "expected a raster value (a number) as the key");
    }
    names.emplace_back(value, mapping.text(key));
  }
  mapping.finish();
  return names;
}

void read_vector_keys(const ConfigNode& node, LabelSourceSettings& s) {
  s.csv = ends_with_csv(s.source);
  s.layer = optional_text(node, "layer");
  s.class_column = node.text("class");
  s.date_column = optional_text(node, "date");
  s.group_column = optional_text(node, "group");
  s.id_column = optional_text(node, "id");
  if (s.csv) {
    const std::string hint = "required for a CSV source: name its coordinate columns and their CRS, "
                             "e.g. x: lon, y: lat, crs: EPSG:4326";
    if (!node.has("x")) node.fail("x", hint);
    if (!node.has("y")) node.fail("y", hint);
    if (!node.has("crs")) node.fail("crs", hint);
    s.x_column = node.text("x");
    s.y_column = node.text("y");
    s.crs = node.text("crs");
    node.allow("layer");
    if (!s.layer.empty()) node.fail("layer", "a CSV has no layers; remove layer:");
  } else {
    refuse(node, {"x", "y"}, "only for a CSV source; a vector source's geometry gives the position");
    s.crs = optional_text(node, "crs");
  }
  s.polygon_chips = static_cast<int>(node.integer("polygon_chips", 4, 1, 10000));
  refuse(node, {"raster_band", "raster_rule", "min_share", "raster_classes", "raster_date"},
         "only for a label raster (labels.raster)");
}

void read_raster_keys(const ConfigNode& node, LabelSourceSettings& s) {
  s.raster_band = static_cast<int>(node.integer("raster_band", 1, 1));
  s.raster_rule = node.choice("raster_rule", {"centre", "majority"}, "centre") == "majority"
                      ? RasterRule::majority
                      : RasterRule::centre;
  s.min_share = node.number("min_share", 0.5, 1e-9, 1.0);
  s.raster_classes = read_raster_classes(node);
  if (node.has("raster_date")) {
    const auto date = parse_date(node.text("raster_date"));
    if (!date) node.fail("raster_date", "expected the date the label raster shows, as YYYY-MM-DD");
    s.raster_date = *date;
  } else {
    node.allow("raster_date");
  }
  refuse(node, {"layer", "class", "date", "group", "id", "x", "y", "crs", "polygon_chips"},
         "only for a vector or CSV source (labels.source); a label raster's values are the classes");
}

LabelSourceSettings read_labels(const ConfigNode& node) {
  LabelSourceSettings s;
  const bool vector = node.has("source");
  if (vector == node.has("raster")) {
    node.fail(vector ? "" : "source", "give either source: (points or polygons: any OGR vector, or a .csv) or "
                                      "raster: (a label raster), not both");
  }
  if (vector) {
    s.source = node.path("source", true);
    node.allow("raster");
    read_vector_keys(node, s);
  } else {
    s.raster = node.path("raster", true);
    node.allow("source");
    read_raster_keys(node, s);
  }
  s.dates_unknown = node.flag("dates_unknown", false);
  const bool dated = !s.date_column.empty() || !s.raster_date.empty();
  if (dated && s.dates_unknown) {
    node.fail("dates_unknown", "the labels have dates (labels.date or labels.raster_date); remove one of them");
  }
  if (node.has("classes")) {
    s.classes_where = node.where("classes");
    s.classes = node.texts("classes");
    if (s.classes.empty()) node.fail("classes", "list at least one class, or remove classes:");
    for (std::size_t i = 0; i < s.classes.size(); ++i) {
      if (s.classes[i].empty()) node.fail("classes", "a class name is empty");
      if (std::find(s.classes.begin(), s.classes.begin() + i, s.classes[i]) != s.classes.begin() + i) {
        node.fail("classes", "class \"" + s.classes[i] + "\" is listed twice");
      }
    }
  } else {
    node.allow("classes");
  }
  node.finish();
  return s;
}

MatchSettings read_match(const ConfigNode& node) {
  MatchSettings s;
  s.max_days = static_cast<int>(node.integer("max_days", 30, 0, 100000));
  node.finish();
  return s;
}

LabelChipSettings read_chips(const ConfigNode& node) {
  LabelChipSettings s;
  s.size = read_chip_size(node);
  s.min_valid = node.number("min_valid", 0.9, 0.0, 1.0);
  s.centre_valid = node.flag("centre_valid", true);
  s.block_size = node.number("block_size", 5000.0, 1e-6);
  s.seed = static_cast<std::uint64_t>(node.integer("seed", 0, 0));
  node.finish();
  return s;
}

// Undated labels take the first covering scene in config order: harmless when the
// scenes lie within the matching window, a silent trap when they span seasons.
void judge_undated_labels(const ConfigNode& labels, const LabelConfig& config) {
  const LabelSourceSettings& s = config.labels;
  if (!s.date_column.empty() || !s.raster_date.empty()) return;
  const SceneSpec* earliest = &config.scenes.front();
  const SceneSpec* latest = earliest;
  for (const SceneSpec& scene : config.scenes) {
    if (days_since_epoch(scene.date) < days_since_epoch(earliest->date)) earliest = &scene;
    if (days_since_epoch(scene.date) > days_since_epoch(latest->date)) latest = &scene;
  }
  const long first = days_since_epoch(earliest->date), last = days_since_epoch(latest->date);
  const std::string first_date = earliest->date, last_date = latest->date;
  const std::string span = "the scenes span " + first_date + " to " + last_date + " (" +
                           std::to_string(last - first) + " days)";
  if (s.dates_unknown) {
    log::info("labels.dates_unknown: each label takes the first covering scene in config order; " + span);
    return;
  }
  const std::string key = s.raster.empty() ? "date" : "raster_date";
  if (last - first > config.match.max_days) {
    const std::string give = s.raster.empty() ? "Name the labels' date column (labels.date: COLUMN)"
                                              : "Give the label raster's date (labels.raster_date: YYYY-MM-DD)";
    labels.fail(key, "not given, so the labels are undated, but " + span + ", more than match.max_days " +
                         std::to_string(config.match.max_days) + ": each label would take whichever scene comes "
                         "first. " + give + ", or set labels.dates_unknown: true if the dates are truly unknown");
  }
  log::warning("the labels are undated (labels." + key + " not given): each takes the first covering scene in "
               "config order; " + span + ", within match.max_days " + std::to_string(config.match.max_days) +
               " (labels.dates_unknown: true says this is meant)");
}

}  // namespace

LabelConfig read_label_config(const ConfigNode& root) {
  LabelConfig config;
  config.sensor = read_sensor_reference(root, "sensor");
  config.output = root.path("output", false);
  config.inputs = read_input_bands(root, config.sensor);
  const auto items = root.items("scenes");
  if (items.empty()) root.fail("scenes", "required: list at least one scene");
  for (const auto& item : items) {
    SceneSpec scene = read_scene_spec(item, config.sensor);
    for (const auto& band : config.inputs) {
      if (!scene.band(band)) item.fail("", "scene " + scene.id + " has no input band " + band);
    }
    for (const auto& earlier : config.scenes) {
      if (earlier.id == scene.id) item.fail("id", "scene id \"" + scene.id + "\" is used twice; set id:");
    }
    config.scenes.push_back(std::move(scene));
  }
  settle_processing_baseline(config.sensor, config.scenes, items);
  config.align = read_grid_settings(root.section("grid"), config.sensor, shared_pixel_size(config.scenes),
                                    config.resolution);
  const ConfigNode labels = root.section("labels");
  config.labels = read_labels(labels);
  config.match = read_match(root.section("match"));
  config.chips = read_chips(root.section("chips"));
  judge_undated_labels(labels, config);
  return config;
}

}  // namespace tinct
