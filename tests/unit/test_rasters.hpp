// Small real GeoTIFFs for tests, written with GDAL: ramps, constants, nodata.
#pragma once

#include <gdal_priv.h>
#include <ogr_spatialref.h>

#include <filesystem>
#include <functional>
#include <optional>
#include <string>
#include <vector>

#include "raster/gdal_session.hpp"

namespace tinct::testing {

struct TestRasterSpec {
  int width = 8;
  int height = 6;
  int bands = 1;
  GDALDataType type = GDT_UInt16;
  int epsg = 32632;  // 0 = no CRS
  double origin_x = 500000, origin_y = 5300000, pixel = 10;
  std::optional<double> nodata;
  // value(band, col, row), band 1-based
  std::function<double(int, int, int)> value = [](int b, int c, int r) { return b * 1000 + r * 10 + c; };
};

inline std::filesystem::path write_test_raster(const std::filesystem::path& path,
                                               const TestRasterSpec& spec) {
  tinct::ensure_gdal();
  GDALDriver* driver = GetGDALDriverManager()->GetDriverByName("GTiff");
  GDALDataset* ds = driver->Create(path.c_str(), spec.width, spec.height, spec.bands, spec.type, nullptr);
  double gt[6] = {spec.origin_x, spec.pixel, 0, spec.origin_y, 0, -spec.pixel};
  ds->SetGeoTransform(gt);
  if (spec.epsg) {
    OGRSpatialReference srs;
    srs.importFromEPSG(spec.epsg);
    ds->SetSpatialRef(&srs);
  }
  std::vector<double> row(spec.width);
  for (int b = 1; b <= spec.bands; ++b) {
    GDALRasterBand* band = ds->GetRasterBand(b);
    if (spec.nodata) band->SetNoDataValue(*spec.nodata);
    for (int r = 0; r < spec.height; ++r) {
      for (int c = 0; c < spec.width; ++c) row[c] = spec.value(b, c, r);
      if (band->RasterIO(GF_Write, 0, r, spec.width, 1, row.data(), spec.width, 1, GDT_Float64, 0, 0,
                         nullptr) != CE_None) {
        throw std::runtime_error("test raster write failed");
      }
    }
  }
  GDALClose(ds);
  return path;
}

}  // namespace tinct::testing
