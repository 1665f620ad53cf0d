// The settings of `tinct label`, read from a YAML config (config: label): the
// sensor, scenes, grid and input bands (as in pair configs), where the labels come
// from, how a label finds its scene, and the chips. Required: sensor, output,
// inputs, scenes and labels (source, or raster); labels.class for a vector or CSV;
// labels.x, labels.y and labels.crs for a CSV. Everything else has a default:
//   grid:   resolution (the pixel size all band files share, if they do, else the
//           profile's reference), refine bilinear, coarsen average
//   labels: layer (the first), classes (the sorted distinct class values; each listed
//           class must match a label), date (none: labels are undated; then the scenes
//           may span at most match.max_days unless dates_unknown: true says the labels'
//           dates are truly unknown), group (the label's id; a polygon's chips share its id),
//           id (the feature id, or the CSV line), crs (a vector layer's own; given for a
//           layer without one, it assigns one), polygon_chips 4,
//           raster_band 1, raster_rule centre, min_share 0.5, raster_classes (none: the
//           class is the raster value as text), raster_date (none)
//   match:  max_days 30 (ignored for undated labels)
//   chips:  size 64, min_valid 0.9, centre_valid true (the label's own pixel must be
//           valid), block_size 5000 (map units), seed 0 (polygon sampling)
// Keys that do not apply to the chosen source (e.g. raster_rule with a CSV) are errors.
// A scene's colour: raster (pair configs) is accepted and not used: label stores hold no colour.
#pragma once

#include <cstdint>
#include <filesystem>
#include <string>
#include <utility>
#include <vector>

#include "raster/resampling.hpp"
#include "raster/scene_spec.hpp"
#include "raster/sensor_profile.hpp"
#include "util/config_node.hpp"

namespace tinct {

enum class RasterRule { centre, majority };

struct LabelSourceSettings {
  std::filesystem::path source;  // vector or CSV; empty when `raster` is set
  bool csv = false;              // source ends in .csv: read as a table of points
  std::string layer;             // "" = the first layer
  std::string class_column;
  std::vector<std::string> classes;  // the class list in order; empty = sorted distinct values
  std::string classes_where;         // "label.yaml: labels.classes (line 7)", for messages
  std::string date_column;           // "" = labels are undated
  bool dates_unknown = false;        // undated on purpose: any scene may give the chip
  std::string group_column;          // "" = group by id
  std::string id_column;             // "" = feature id or CSV line
  std::string x_column, y_column;    // CSV only
  std::string crs;                   // CSV: required; vector: for a layer without a CRS
  int polygon_chips = 4;             // seeded points per polygon

  std::filesystem::path raster;      // a label raster instead of `source`
  int raster_band = 1;
  RasterRule raster_rule = RasterRule::centre;
  double min_share = 0.5;                                  // majority: share of the chip
  std::vector<std::pair<double, std::string>> raster_classes;  // raster value -> class name
  std::string raster_date;                                 // YYYY-MM-DD, "" = undated
};

struct MatchSettings {
  int max_days = 30;  // a dated label takes a scene at most this many days away
};

struct LabelChipSettings {
  int size = 64;            // pixels; the label's pixel is (size/2, size/2)
  double min_valid = 0.9;   // share of valid pixels a chip needs
  bool centre_valid = true; // the label's own pixel must be valid
  double block_size = 5000; // map units, for chips.csv's block column
  std::uint64_t seed = 0;
};

struct LabelConfig {
  SensorProfile sensor;
  std::vector<SceneSpec> scenes;
  double resolution = 0;  // metres; see grid: above
  AlignSettings align;
  std::vector<std::string> inputs;
  LabelSourceSettings labels;
  MatchSettings match;
  LabelChipSettings chips;
  std::filesystem::path output;
};

// Reads and checks the whole config (files exist, bands known, values in range);
// `root` is the config's top level. Calls finish() on every section.
LabelConfig read_label_config(const ConfigNode& root);

}  // namespace tinct
