#include "raster/point_package.hpp"

#include <gdal_priv.h>
#include <ogrsf_frmts.h>

#include <cmath>

#include "raster/gdal_session.hpp"
#include "util/atomic_file.hpp"
#include "util/error.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

void add_fields(OGRLayer* layer, const std::vector<std::string>& names, OGRFieldType type, const fs::path& file) {
  for (const auto& name : names) {
    OGRFieldDefn field(name.c_str(), type);
    if (layer->CreateField(&field) != OGRERR_NONE) {
      fail_runtime(file.string() + ": cannot add field " + name + ": " + last_gdal_message());
    }
  }
}

void add_point(OGRLayer* layer, const PackagePoint& p, std::size_t texts, const fs::path& file) {
  OGRFeature feature(layer->GetLayerDefn());
  for (std::size_t i = 0; i < p.texts.size(); ++i) feature.SetField(static_cast<int>(i), p.texts[i].c_str());
  for (std::size_t i = 0; i < p.numbers.size(); ++i) {
    if (std::isfinite(p.numbers[i])) feature.SetField(static_cast<int>(texts + i), p.numbers[i]);
    else feature.SetFieldNull(static_cast<int>(texts + i));
  }
  OGRPoint point(p.x, p.y);
  feature.SetGeometry(&point);
  if (layer->CreateFeature(&feature) != OGRERR_NONE) {
    fail_runtime(file.string() + ": cannot write a point: " + last_gdal_message());
  }
}

}  // namespace

void write_point_package(const fs::path& file, const std::string& layer_name, const std::string& crs_wkt,
                         const std::vector<std::string>& text_fields, const std::vector<std::string>& number_fields,
                         const std::vector<PackagePoint>& points) {
  ensure_gdal();
  fs::path temporary = temporary_sibling(file);
  temporary += ".gpkg";
  GDALDriver* driver = GetGDALDriverManager()->GetDriverByName("GPKG");
  if (driver == nullptr) fail_runtime("GDAL lacks its GPKG driver; install Debian's libgdal32");
  {
    std::unique_ptr<GDALDataset> dataset(driver->Create(temporary.c_str(), 0, 0, 0, GDT_Unknown, nullptr));
    if (!dataset) fail_runtime(file.string() + ": cannot create a GeoPackage: " + last_gdal_message());
    OGRSpatialReference srs;
    srs.SetAxisMappingStrategy(OAMS_TRADITIONAL_GIS_ORDER);
    const bool has_crs = !crs_wkt.empty() && srs.SetFromUserInput(crs_wkt.c_str()) == OGRERR_NONE;
    OGRLayer* layer = dataset->CreateLayer(layer_name.c_str(), has_crs ? &srs : nullptr, wkbPoint, nullptr);
    if (layer == nullptr) fail_runtime(file.string() + ": cannot create layer " + layer_name);
    add_fields(layer, text_fields, OFTString, file);
    add_fields(layer, number_fields, OFTReal, file);
    layer->StartTransaction();
    for (const auto& p : points) add_point(layer, p, text_fields.size(), file);
    layer->CommitTransaction();
  }
  commit_file(temporary, file);
}

}  // namespace tinct
