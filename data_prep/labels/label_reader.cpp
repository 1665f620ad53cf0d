#include "labels/label_reader.hpp"

#include <algorithm>
#include <cerrno>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <set>

#include "labels/csv_table.hpp"
#include "raster/crs.hpp"
#include "raster/scene_date.hpp"
#include "raster/target_grid.hpp"
#include "raster/vector_layer.hpp"
#include "util/error.hpp"
#include "util/nearest_name.hpp"

namespace tinct {
namespace {

std::string listed(const std::vector<std::string>& names) {
  std::string text;
  for (const auto& name : names) text += (text.empty() ? "" : ", ") + name;
  return text;
}

// Fails (usage): the config names a column the file lacks.
[[noreturn]] void fail_column(const std::string& file, const std::string& key, const std::string& column,
                              const std::vector<std::string>& columns) {
  std::string message = file + ": no column \"" + column + "\" (labels." + key + "); its columns are " +
                        listed(columns);
  const std::string near = nearest_name(column, columns);
  if (!near.empty()) message += "; did you mean \"" + near + "\"?";
  fail_usage(message);
}

std::string checked_date(const std::string& text, const std::string& where, const std::string& column) {
  const auto date = parse_date(text);
  if (!date) {
    fail_runtime(where + ": " + column + " holds \"" + text +
                 "\", not a date; write it as YYYY-MM-DD (or remove labels.date to match undated)");
  }
  return *date;
}

double checked_number(const std::string& text, const std::string& where, const std::string& column) {
  errno = 0;
  char* end = nullptr;
  const double value = std::strtod(text.c_str(), &end);
  while (end && (*end == ' ' || *end == '\t')) ++end;
  if (text.empty() || errno != 0 || *end != '\0' || !std::isfinite(value)) {
    fail_runtime(where + ": " + column + " holds \"" + text + "\", not a coordinate");
  }
  return value;
}

std::string required_text(const std::string& text, const std::string& where, const std::string& column) {
  if (text.empty()) fail_runtime(where + ": " + column + " is empty; fill it in or remove the row");
  return text;
}

// ---- CSV: points in columns x, y of the CRS labels.crs

LabelSet read_csv(const LabelSourceSettings& s) {
  const CsvTable table = read_csv_table(s.source);
  const std::string file = s.source.string();
  constexpr std::size_t kNone = static_cast<std::size_t>(-1);  // an optional column not asked for
  const auto column = [&](const std::string& key, const std::string& name) {
    if (name.empty()) return kNone;
    const auto index = table.column(name);
    if (!index) fail_column(file, key, name, table.header);
    return *index;
  };
  const std::size_t x = column("x", s.x_column), y = column("y", s.y_column);
  const std::size_t cls = column("class", s.class_column);
  const std::size_t date = column("date", s.date_column);
  const std::size_t group = column("group", s.group_column);
  const std::size_t id = column("id", s.id_column);

  LabelSet set;
  set.crs = crs_as_wkt(s.crs, "labels.crs");
  for (const CsvRow& row : table.rows) {
    LabelRecord label;
    label.where = file + " line " + std::to_string(row.line);
    label.id = id != kNone ? required_text(row.fields[id], label.where, s.id_column) : std::to_string(row.line);
    label.class_name = required_text(row.fields[cls], label.where, s.class_column);
    if (date != kNone) label.date = checked_date(row.fields[date], label.where, s.date_column);
    label.group = group != kNone ? required_text(row.fields[group], label.where, s.group_column) : label.id;
    label.x = checked_number(row.fields[x], label.where, s.x_column);
    label.y = checked_number(row.fields[y], label.where, s.y_column);
    set.labels.push_back(std::move(label));
  }
  return set;
}

// ---- any OGR vector source

std::string layer_crs(const VectorLayer& layer, const LabelSourceSettings& s) {
  const std::string file = s.source.string();
  const std::string wkt = layer.crs_wkt();
  if (wkt.empty()) {
    if (!s.crs.empty()) return crs_as_wkt(s.crs, "labels.crs");
    fail_usage(file + ": layer " + layer.name() + " has no CRS, so its coordinates cannot be placed on "
               "the scenes; set labels.crs (e.g. crs: EPSG:4326) in the config, or write the CRS into "
               "the file (ogr2ogr -a_srs EPSG:4326 fixed.gpkg " + s.source.filename().string() + ")");
  }
  if (!s.crs.empty() && !same_crs(wkt, crs_as_wkt(s.crs, "labels.crs"))) {
    fail_usage(file + ": layer " + layer.name() + " has its own CRS, which differs from labels.crs " +
               s.crs + "; remove labels.crs (it only assigns a CRS to a layer without one)");
  }
  return wkt;
}

int field_of(const VectorLayer& layer, const LabelSourceSettings& s, const std::string& key,
             const std::string& name) {
  if (name.empty()) return -1;
  const int index = layer.field_index(name);
  if (index >= 0) return index;
  fail_column(s.source.string(), key, name, layer.field_names());
}

std::string field_text(const FieldValue& value, const std::string& where, const std::string& column) {
  if (!value.present) fail_runtime(where + ": " + column + " is empty; fill it in");
  return required_text(value.text, where, column);
}

std::string field_date(const FieldValue& value, const std::string& where, const std::string& column) {
  if (!value.present) fail_runtime(where + ": " + column + " is empty; give the visit date as YYYY-MM-DD");
  if (value.kind == FieldKind::date) {
    char text[32];
    std::snprintf(text, sizeof(text), "%04d-%02d-%02d", value.year, value.month, value.day);
    return checked_date(text, where, column);
  }
  if (value.kind != FieldKind::text) {
    fail_runtime(where + ": " + column + " is a " + value.type_name +
                 " field; a date column holds dates or text as YYYY-MM-DD");
  }
  return checked_date(value.text, where, column);
}

void place_geometry(const FeatureGeometry& geometry, LabelRecord& label) {
  switch (geometry.kind) {
    case GeometryKind::none:
      fail_runtime(label.where + ": has no geometry; give it a point or a polygon, or remove it");
    case GeometryKind::other:
      fail_runtime(label.where + ": is a " + geometry.type_name +
                   "; labels are points or polygons (split multi-points into single points)");
    case GeometryKind::polygon:
      label.shape = LabelShape::polygon;
      label.polygon_wkt = geometry.wkt;
      return;
    case GeometryKind::point:
      break;
  }
  label.x = geometry.x;
  label.y = geometry.y;
  if (!std::isfinite(label.x) || !std::isfinite(label.y)) {
    fail_runtime(label.where + ": its point has no finite coordinates");
  }
}

LabelSet read_vector(const LabelSourceSettings& s) {
  const std::string file = s.source.string();
  const VectorLayer layer = VectorLayer::open(s.source, s.layer);
  LabelSet set;
  set.crs = layer_crs(layer, s);
  // Fields asked for, in this order: class, date, group, id (-1 when not asked).
  const std::vector<int> fields = {field_of(layer, s, "class", s.class_column), field_of(layer, s, "date", s.date_column),
                                   field_of(layer, s, "group", s.group_column), field_of(layer, s, "id", s.id_column)};
  layer.for_each_feature(fields, [&](const VectorFeature& feature) {
    const FieldValue &cls = feature.fields[0], &date = feature.fields[1], &group = feature.fields[2],
                     &id = feature.fields[3];
    LabelRecord label;
    label.where = file + " feature " + std::to_string(feature.fid);
    label.id = fields[3] >= 0 ? field_text(id, label.where, s.id_column) : std::to_string(feature.fid);
    label.class_name = field_text(cls, label.where, s.class_column);
    if (fields[1] >= 0) label.date = field_date(date, label.where, s.date_column);
    label.group = fields[2] >= 0 ? field_text(group, label.where, s.group_column) : label.id;
    place_geometry(feature.geometry, label);
    set.labels.push_back(std::move(label));
  });
  return set;
}

}  // namespace

LabelSet read_label_source(const LabelSourceSettings& settings) {
  LabelSet set = settings.csv ? read_csv(settings) : read_vector(settings);
  if (set.labels.empty()) fail_runtime(settings.source.string() + ": holds no labels");
  return set;
}

std::vector<std::string> select_classes(LabelSet& set, const std::vector<std::string>& listed_classes) {
  std::vector<std::string> classes = listed_classes;
  if (classes.empty()) {
    const std::set<std::string> distinct = [&] {
      std::set<std::string> names;
      for (const auto& label : set.labels) names.insert(label.class_name);
      return names;
    }();
    classes.assign(distinct.begin(), distinct.end());
  }
  const std::set<std::string> known(classes.begin(), classes.end());
  std::vector<LabelRecord> kept;
  for (auto& label : set.labels) {
    if (known.count(label.class_name)) {
      kept.push_back(std::move(label));
      continue;
    }
    set.drops.push_back({label.id, label.class_name, DropReason::class_not_listed,
                         "labels.classes lists " + listed(classes)});
  }
  set.labels = std::move(kept);
  return classes;
}

}  // namespace tinct
