#include "raster/vector_layer.hpp"

#include <gdal_priv.h>
#include <ogrsf_frmts.h>

#include "raster/gdal_session.hpp"
#include "util/error.hpp"
#include "util/log.hpp"
#include "util/nearest_name.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

std::string listed(const std::vector<std::string>& names) {
  std::string text;
  for (const auto& name : names) text += (text.empty() ? "" : ", ") + name;
  return text;
}

OGRLayer* choose_layer(GDALDataset& dataset, const std::string& file, const std::string& wanted,
                       const std::string& layer_key) {
  std::vector<std::string> names;
  for (int i = 0; i < dataset.GetLayerCount(); ++i) names.push_back(dataset.GetLayer(i)->GetName());
  if (names.empty()) fail_runtime(file + ": holds no vector layer");
  if (wanted.empty()) {
    if (names.size() > 1) {
      log::info(file + ": reading its first layer, " + names.front() + ", of " + listed(names) + " (set " +
                layer_key + " to choose)");
    }
    return dataset.GetLayer(0);
  }
  if (OGRLayer* layer = dataset.GetLayerByName(wanted.c_str())) return layer;
  std::string message = file + ": no layer \"" + wanted + "\" (" + layer_key + "); its layers are " + listed(names);
  const std::string near = nearest_name(wanted, names);
  if (!near.empty()) message += "; did you mean \"" + near + "\"?";
  fail_usage(message);
}

FieldValue field_value(OGRFeature& feature, int field) {
  FieldValue value;
  if (field < 0 || !feature.IsFieldSetAndNotNull(field)) return value;
  value.present = true;
  const OGRFieldType type = feature.GetFieldDefnRef(field)->GetType();
  value.type_name = OGRFieldDefn::GetFieldTypeName(type);
  value.text = feature.GetFieldAsString(field);
  if (type == OFTDate || type == OFTDateTime) {
    int hour = 0, minute = 0, zone = 0;
    float second = 0;
    feature.GetFieldAsDateTime(field, &value.year, &value.month, &value.day, &hour, &minute, &second, &zone);
    value.kind = FieldKind::date;
  } else {
    value.kind = type == OFTString ? FieldKind::text : FieldKind::other;
  }
  return value;
}

FeatureGeometry geometry_value(const OGRGeometry* geometry) {
  FeatureGeometry out;
  if (!geometry || geometry->IsEmpty()) return out;
  out.type_name = OGRGeometryTypeToName(geometry->getGeometryType());
  const OGRwkbGeometryType type = wkbFlatten(geometry->getGeometryType());
  const OGRPoint* point = nullptr;
  if (type == wkbPoint) {
    point = geometry->toPoint();
  } else if (type == wkbMultiPoint && geometry->toMultiPoint()->getNumGeometries() == 1) {
    point = geometry->toMultiPoint()->getGeometryRef(0);
  } else if (type == wkbPolygon || type == wkbMultiPolygon) {
    out.kind = GeometryKind::polygon;
    char* text = nullptr;
    geometry->exportToWkt(&text, wkbVariantIso);
    out.wkt = text ? text : "";
    CPLFree(text);
    return out;
  }
  if (!point) {
    out.kind = GeometryKind::other;
    return out;
  }
  out.kind = GeometryKind::point;
  out.x = point->getX();
  out.y = point->getY();
  return out;
}

}  // namespace

void VectorLayer::Close::operator()(GDALDataset* dataset) const { GDALClose(dataset); }

VectorLayer::VectorLayer(std::unique_ptr<GDALDataset, Close> dataset, OGRLayer* layer)
    : dataset_(std::move(dataset)), layer_(layer) {}
VectorLayer::VectorLayer(VectorLayer&&) noexcept = default;
VectorLayer& VectorLayer::operator=(VectorLayer&&) noexcept = default;
VectorLayer::~VectorLayer() = default;

VectorLayer VectorLayer::open(const fs::path& file, const std::string& layer, const std::string& layer_key) {
  ensure_gdal();
  const std::string name = file.string();
  std::unique_ptr<GDALDataset, Close> dataset(GDALDataset::FromHandle(
      GDALOpenEx(name.c_str(), GDAL_OF_VECTOR | GDAL_OF_READONLY, nullptr, nullptr, nullptr)));
  if (!dataset) {
    fail_runtime(name + ": not a vector file OGR can read (" + last_gdal_message() +
                 "); use GeoJSON, GeoPackage, a Shapefile, or a .csv");
  }
  OGRLayer* chosen = choose_layer(*dataset, name, layer, layer_key);
  return VectorLayer(std::move(dataset), chosen);
}

std::string VectorLayer::name() const { return layer_->GetName(); }

std::string VectorLayer::crs_wkt() const {
  const OGRSpatialReference* own = layer_->GetSpatialRef();
  if (!own || own->IsEmpty()) return "";
  char* text = nullptr;
  const char* const options[] = {"FORMAT=WKT2_2018", nullptr};
  own->exportToWkt(&text, options);
  const std::string wkt = text ? text : "";
  CPLFree(text);
  return wkt;
}

std::vector<std::string> VectorLayer::field_names() const {
  OGRFeatureDefn& definition = *layer_->GetLayerDefn();
  std::vector<std::string> names;
  for (int i = 0; i < definition.GetFieldCount(); ++i) names.push_back(definition.GetFieldDefn(i)->GetNameRef());
  return names;
}

int VectorLayer::field_index(const std::string& name) const {
  return layer_->GetLayerDefn()->GetFieldIndex(name.c_str());
}

void VectorLayer::for_each_feature(const std::vector<int>& fields,
                                   const std::function<void(const VectorFeature&)>& visit) const {
  layer_->ResetReading();
  VectorFeature out;
  for (const auto& feature : *layer_) {
    out.fid = feature->GetFID();
    out.fields.clear();
    for (const int field : fields) out.fields.push_back(field_value(*feature, field));
    out.geometry = geometry_value(feature->GetGeometryRef());
    visit(out);
  }
}

}  // namespace tinct
