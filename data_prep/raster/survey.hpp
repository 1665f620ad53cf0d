// What a raster holds: grid, CRS and exact per-band statistics over valid pixels
// (not nodata, finite). Reads the raster block by block, so memory stays bounded.
#pragma once

#include <filesystem>
#include <optional>
#include <string>
#include <vector>

#include "raster/raster.hpp"

namespace tinct {

struct BandSurvey {
  BandInfo info;
  std::int64_t valid_count = 0;
  double valid_fraction = 0;
  double min = 0, max = 0, mean = 0, std = 0;  // std: population (as GDAL reports)
};

struct RasterSurvey {
  std::string path;
  std::string driver;
  int width = 0, height = 0;
  std::string crs_wkt;
  std::optional<int> epsg;
  GeoTransform geotransform{};
  std::vector<BandSurvey> bands;
};

// Fails (runtime) when the file is missing, not a raster, or has no CRS.
RasterSurvey survey_raster(const std::filesystem::path& path);

}  // namespace tinct
