#include "raster/crs.hpp"

#include <cpl_conv.h>
#include <ogr_spatialref.h>

#include "raster/gdal_session.hpp"
#include "util/error.hpp"

namespace tinct {

std::string crs_as_wkt(const std::string& definition, const std::string& role) {
  ensure_gdal();
  OGRSpatialReference crs;
  if (definition.empty() || crs.SetFromUserInput(definition.c_str()) != OGRERR_NONE) {
    fail_usage("the " + role + " \"" + definition.substr(0, 80) +
               "\" is not a CRS OGR can read; give e.g. EPSG:4326 or a WKT text");
  }
  char* text = nullptr;
  const char* const options[] = {"FORMAT=WKT2_2018", nullptr};
  crs.exportToWkt(&text, options);
  std::string wkt = text ? text : "";
  CPLFree(text);
  return wkt;
}

bool crs_is_geographic(const std::string& wkt) {
  OGRSpatialReference crs;
  return crs.importFromWkt(wkt.c_str()) == OGRERR_NONE && crs.IsGeographic();
}

}  // namespace tinct
