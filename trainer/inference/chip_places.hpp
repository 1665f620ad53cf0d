// Where chips lie, for predictions.csv: the centre's map coordinates in its scene's CRS,
// that CRS's short name (EPSG:32632) and the centre's longitude and latitude (WGS 84),
// with one point transform per CRS.
#pragma once

#include <map>
#include <memory>
#include <string>

#include "batches/chip_collection.hpp"
#include "raster/point_transform.hpp"

namespace tinct {

struct ChipPlace {
  double x = 0, y = 0;
  std::string crs;        // "" when the store's CRS is unknown
  bool has_lonlat = false;  // false in a local CRS
  double lon = 0, lat = 0;
};

class ChipPlaces {
 public:
  explicit ChipPlaces(const ChipCollection& chips) : chips_(chips) {}
  ChipPlace of(const ChipRef& ref);

 private:
  struct CrsView {
    std::string name;
    std::unique_ptr<PointTransform> to_lonlat;  // null when there is no longitude/latitude
  };
  const CrsView& view(const std::string& wkt);

  const ChipCollection& chips_;
  std::map<std::string, CrsView> views_;  // by WKT
};

}  // namespace tinct
