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

std::string crs_short_name(const std::string& wkt) {
  ensure_gdal();
  OGRSpatialReference crs;
  if (wkt.empty() || crs.importFromWkt(wkt.c_str()) != OGRERR_NONE) return "";
  const char* authority = crs.GetAuthorityName(nullptr);
  const char* code = crs.GetAuthorityCode(nullptr);
  if ((!authority || !code) && crs.AutoIdentifyEPSG() == OGRERR_NONE) {
    authority = crs.GetAuthorityName(nullptr);
    code = crs.GetAuthorityCode(nullptr);
  }
  if (authority && code) return std::string(authority) + ":" + code;
  const char* name = crs.GetName();
  return name ? name : "";
}

bool crs_has_lonlat(const std::string& wkt) {
  ensure_gdal();
  OGRSpatialReference crs;
  return !wkt.empty() && crs.importFromWkt(wkt.c_str()) == OGRERR_NONE && (crs.IsProjected() || crs.IsGeographic());
}

}  // namespace tinct
