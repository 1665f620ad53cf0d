// Writes points with attributes to a GeoPackage (OGR's GPKG driver): one layer, the
// given CRS, text and real fields; written under a temporary name and renamed.
#pragma once

#include <filesystem>
#include <string>
#include <vector>

namespace tinct {

struct PackagePoint {
  double x = 0, y = 0;
  std::vector<std::string> texts;  // one per text field
  std::vector<double> numbers;     // one per number field (NaN: null)
};

void write_point_package(const std::filesystem::path& file, const std::string& layer, const std::string& crs_wkt,
                         const std::vector<std::string>& text_fields, const std::vector<std::string>& number_fields,
                         const std::vector<PackagePoint>& points);

}  // namespace tinct
