// One layer of a vector file (any OGR source: GeoJSON, GeoPackage, Shapefile, ...)
// with RAII ownership of the OGR dataset, read feature by feature into plain
// values (fields as text or dates, points, polygons as WKT), so no OGR type
// leaves this folder. Errors name the file.
#pragma once

#include <cstdint>
#include <filesystem>
#include <functional>
#include <memory>
#include <string>
#include <vector>

class GDALDataset;
class OGRLayer;

namespace tinct {

enum class FieldKind { text, date, other };  // other: numbers and the rest, read as text

struct FieldValue {
  bool present = false;   // set and not null
  FieldKind kind = FieldKind::text;
  std::string text;       // the value as OGR writes it as text
  std::string type_name;  // OGR's name of the field type ("Integer", "Date", ...)
  int year = 0, month = 0, day = 0;  // FieldKind::date
};

enum class GeometryKind { none, point, polygon, other };

struct FeatureGeometry {
  GeometryKind kind = GeometryKind::none;  // a multi-point of one point is a point
  double x = 0, y = 0;                     // point
  std::string wkt;                         // polygon or multipolygon, ISO WKT
  std::string type_name;                   // OGR's name of the geometry type
};

struct VectorFeature {
  std::int64_t fid = 0;
  std::vector<FieldValue> fields;  // the fields asked for, in that order
  FeatureGeometry geometry;
};

class VectorLayer {
 public:
  // Opens `file` read-only and takes the layer named `layer`, or the first when
  // `layer` is empty (with a log line naming the others). Fails (runtime) when the
  // file is not a vector source, (usage) when the layer is missing.
  static VectorLayer open(const std::filesystem::path& file, const std::string& layer,
                          const std::string& layer_key = "labels.layer");
  VectorLayer(VectorLayer&&) noexcept;
  VectorLayer& operator=(VectorLayer&&) noexcept;
  ~VectorLayer();

  std::string name() const;
  // The layer's CRS as WKT2, "" when it has none.
  std::string crs_wkt() const;
  std::vector<std::string> field_names() const;
  // Field index of `name`, -1 when absent.
  int field_index(const std::string& name) const;

  // Calls `visit` for every feature, with the values of `fields` (indices from
  // field_index; -1 gives an absent value).
  void for_each_feature(const std::vector<int>& fields,
                        const std::function<void(const VectorFeature&)>& visit) const;

 private:
  struct Close {
    void operator()(GDALDataset* dataset) const;
  };
  VectorLayer(std::unique_ptr<GDALDataset, Close> dataset, OGRLayer* layer);
  std::unique_ptr<GDALDataset, Close> dataset_;
  OGRLayer* layer_ = nullptr;  // owned by dataset_
};

}  // namespace tinct
