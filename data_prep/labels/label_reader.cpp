#include "labels/label_reader.hpp"

#include <gdal_priv.h>
#include <ogrsf_frmts.h>

#include <algorithm>
#include <cerrno>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <set>

#include "labels/csv_table.hpp"
#include "labels/point_transform.hpp"
#include "raster/gdal_session.hpp"
#include "raster/scene_date.hpp"
#include "raster/target_grid.hpp"
#include "util/error.hpp"
#include "util/log.hpp"
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

OGRLayer* choose_layer(GDALDataset& dataset, const LabelSourceSettings& s) {
  const std::string file = s.source.string();
  std::vector<std::string> names;
  for (int i = 0; i < dataset.GetLayerCount(); ++i) names.push_back(dataset.GetLayer(i)->GetName());
  if (names.empty()) fail_runtime(file + ": holds no vector layer");
  if (s.layer.empty()) {
    if (names.size() > 1) {
      log::info(file + ": reading its first layer, " + names.front() + ", of " + listed(names) +
                " (set labels.layer to choose)");
    }
    return dataset.GetLayer(0);
  }
  if (OGRLayer* layer = dataset.GetLayerByName(s.layer.c_str())) return layer;
  std::string message = file + ": no layer \"" + s.layer + "\" (labels.layer); its layers are " + listed(names);
  const std::string near = nearest_name(s.layer, names);
  if (!near.empty()) message += "; did you mean \"" + near + "\"?";
  fail_usage(message);
}

std::string layer_crs(OGRLayer& layer, const LabelSourceSettings& s) {
  const std::string file = s.source.string();
  const OGRSpatialReference* own = layer.GetSpatialRef();
  if (!own || own->IsEmpty()) {
    if (!s.crs.empty()) return crs_as_wkt(s.crs, "labels.crs");
    fail_usage(file + ": layer " + layer.GetName() + " has no CRS, so its coordinates cannot be placed on "
               "the scenes; set labels.crs (e.g. crs: EPSG:4326) in the config, or write the CRS into "
               "the file (ogr2ogr -a_srs EPSG:4326 fixed.gpkg " + s.source.filename().string() + ")");
  }
  char* text = nullptr;
  const char* const options[] = {"FORMAT=WKT2_2018", nullptr};
  own->exportToWkt(&text, options);
  const std::string wkt = text ? text : "";
  CPLFree(text);
  if (!s.crs.empty() && !same_crs(wkt, crs_as_wkt(s.crs, "labels.crs"))) {
    fail_usage(file + ": layer " + layer.GetName() + " has its own CRS, which differs from labels.crs " +
               s.crs + "; remove labels.crs (it only assigns a CRS to a layer without one)");
  }
  return wkt;
}

int field_of(OGRFeatureDefn& definition, const LabelSourceSettings& s, const std::string& key,
             const std::string& name) {
  if (name.empty()) return -1;
  const int index = definition.GetFieldIndex(name.c_str());
  if (index >= 0) return index;
  std::vector<std::string> fields;
  for (int i = 0; i < definition.GetFieldCount(); ++i) fields.push_back(definition.GetFieldDefn(i)->GetNameRef());
  fail_column(s.source.string(), key, name, fields);
}

std::string field_text(OGRFeature& feature, int field, const std::string& where, const std::string& column) {
  if (!feature.IsFieldSetAndNotNull(field)) fail_runtime(where + ": " + column + " is empty; fill it in");
  return required_text(feature.GetFieldAsString(field), where, column);
}

std::string field_date(OGRFeature& feature, int field, const std::string& where, const std::string& column) {
  if (!feature.IsFieldSetAndNotNull(field)) {
    fail_runtime(where + ": " + column + " is empty; give the visit date as YYYY-MM-DD");
  }
  const OGRFieldType type = feature.GetFieldDefnRef(field)->GetType();
  if (type == OFTDate || type == OFTDateTime) {
    int year = 0, month = 0, day = 0, hour = 0, minute = 0, zone = 0;
    float second = 0;
    feature.GetFieldAsDateTime(field, &year, &month, &day, &hour, &minute, &second, &zone);
    char text[32];
    std::snprintf(text, sizeof(text), "%04d-%02d-%02d", year, month, day);
    return checked_date(text, where, column);
  }
  if (type != OFTString) {
    fail_runtime(where + ": " + column + " is a " + OGRFieldDefn::GetFieldTypeName(type) +
                 " field; a date column holds dates or text as YYYY-MM-DD");
  }
  return checked_date(feature.GetFieldAsString(field), where, column);
}

void place_geometry(const OGRGeometry* geometry, LabelRecord& label) {
  if (!geometry || geometry->IsEmpty()) {
    fail_runtime(label.where + ": has no geometry; give it a point or a polygon, or remove it");
  }
  const OGRwkbGeometryType type = wkbFlatten(geometry->getGeometryType());
  const OGRPoint* point = nullptr;
  if (type == wkbPoint) {
    point = geometry->toPoint();
  } else if (type == wkbMultiPoint && geometry->toMultiPoint()->getNumGeometries() == 1) {
    point = geometry->toMultiPoint()->getGeometryRef(0);
  } else if (type == wkbPolygon || type == wkbMultiPolygon) {
    label.shape = LabelShape::polygon;
    char* text = nullptr;
    geometry->exportToWkt(&text, wkbVariantIso);
    label.polygon_wkt = text ? text : "";
    CPLFree(text);
    return;
  }
  if (!point) {
    fail_runtime(label.where + ": is a " + OGRGeometryTypeToName(geometry->getGeometryType()) +
                 "; labels are points or polygons (split multi-points into single points)");
  }
  label.x = point->getX();
  label.y = point->getY();
  if (!std::isfinite(label.x) || !std::isfinite(label.y)) {
    fail_runtime(label.where + ": its point has no finite coordinates");
  }
}

LabelSet read_vector(const LabelSourceSettings& s) {
  ensure_gdal();
  const std::string file = s.source.string();
  GDALDatasetUniquePtr dataset(GDALDataset::FromHandle(
      GDALOpenEx(file.c_str(), GDAL_OF_VECTOR | GDAL_OF_READONLY, nullptr, nullptr, nullptr)));
  if (!dataset) {
    fail_runtime(file + ": not a vector file OGR can read (" + last_gdal_message() +
                 "); use GeoJSON, GeoPackage, a Shapefile, or a .csv");
  }
  OGRLayer* layer = choose_layer(*dataset, s);
  LabelSet set;
  set.crs = layer_crs(*layer, s);
  OGRFeatureDefn& definition = *layer->GetLayerDefn();
  const int cls = field_of(definition, s, "class", s.class_column);
  const int date = field_of(definition, s, "date", s.date_column);
  const int group = field_of(definition, s, "group", s.group_column);
  const int id = field_of(definition, s, "id", s.id_column);
  layer->ResetReading();
  for (const auto& feature : *layer) {
    LabelRecord label;
    label.where = file + " feature " + std::to_string(feature->GetFID());
    label.id = id >= 0 ? field_text(*feature, id, label.where, s.id_column) : std::to_string(feature->GetFID());
    label.class_name = field_text(*feature, cls, label.where, s.class_column);
    if (date >= 0) label.date = field_date(*feature, date, label.where, s.date_column);
    label.group = group >= 0 ? field_text(*feature, group, label.where, s.group_column) : label.id;
    place_geometry(feature->GetGeometryRef(), label);
    set.labels.push_back(std::move(label));
  }
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
