// Field labels from a vector file (any OGR source: GeoJSON, GeoPackage,
// Shapefile, ...) or a CSV of points: each label's id, class, date, group and
// geometry (a point, or a polygon kept as WKT for sampling) in the source's CRS.
// Errors name the file and the CSV line or the feature id; a source without a
// CRS is refused unless labels.crs assigns one.
#pragma once

#include <string>
#include <vector>

#include "labels/label_config.hpp"
#include "labels/label_drops.hpp"

namespace tinct {

enum class LabelShape { point, polygon };

struct LabelRecord {
  std::string id;          // the id column, the feature id, or the CSV line
  std::string class_name;
  std::string date;        // YYYY-MM-DD; "" = undated
  std::string group;       // the group column, else the id
  LabelShape shape = LabelShape::point;
  double x = 0, y = 0;     // a point in the set's CRS, x = longitude or easting
  std::string polygon_wkt; // a polygon or multipolygon in the set's CRS
  int sample = 0;          // a point sampled in a polygon: 1, 2, ...; else 0
  std::string where;       // "sites.csv line 5", "sites.gpkg feature 3": for messages
};

struct LabelSet {
  std::string crs;  // the CRS of every geometry (WKT, or a definition such as EPSG:4326)
  std::vector<LabelRecord> labels;
  std::vector<LabelDrop> drops;  // labels dropped while reading
};

// Reads labels.source (a .csv by its own reader, anything else through OGR).
LabelSet read_label_source(const LabelSourceSettings& settings);

// The class list: settings.classes, or the sorted distinct classes of `set`.
// Labels of other classes move to set.drops ("class not in the list").
std::vector<std::string> select_classes(LabelSet& set, const std::vector<std::string>& listed);

}  // namespace tinct
