// CRS definitions as OGR reads them: any user text (EPSG:4326, WKT, a PROJ
// string) to WKT2, and the properties of a CRS that callers test, so OGR's
// spatial reference type stays inside this folder.
#pragma once

#include <string>

namespace tinct {

// The CRS `definition` as WKT2 (fails, usage, naming `role` when OGR cannot read it).
std::string crs_as_wkt(const std::string& definition, const std::string& role);

// Whether `wkt` is a geographic (longitude/latitude) CRS; false when unreadable.
bool crs_is_geographic(const std::string& wkt);

// A short name for files people read: "EPSG:32632" when OGR identifies an authority
// code, else the CRS's own name; "" when unreadable.
std::string crs_short_name(const std::string& wkt);

// Whether points in `wkt` have a longitude and latitude (a projected or geographic CRS,
// not a local engineering one).
bool crs_has_lonlat(const std::string& wkt);

}  // namespace tinct
