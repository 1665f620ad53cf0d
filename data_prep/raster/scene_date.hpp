// Acquisition dates as ISO 8601 calendar dates (YYYY-MM-DD): parsing what users
// and GDAL metadata write, and the day arithmetic date matching needs.
#pragma once

#include <optional>
#include <string>

#include "raster/raster.hpp"

namespace tinct {

// "2026-06-14", "2026-06-14T10:20:31Z", "2026:06:14 10:20:31" (TIFF) -> "2026-06-14";
// nullopt when the text holds no valid calendar date.
std::optional<std::string> parse_date(const std::string& text);

// The date GDAL reports for the raster (ACQUISITION_DATE, Sentinel-2 and Landsat
// product keys, TIFFTAG_DATETIME), if any.
std::optional<std::string> date_from_metadata(const Raster& raster);

// Days since 1970-01-01 of a YYYY-MM-DD date (proleptic Gregorian).
long days_since_epoch(const std::string& iso_date);

}  // namespace tinct
