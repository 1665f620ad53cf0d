#include "raster/survey.hpp"

#include <algorithm>
#include <cmath>
#include <vector>

#include "util/error.hpp"
#include "util/running_stats.hpp"

namespace tinct {
namespace {

constexpr int kRowsPerRead = 256;

BandSurvey survey_band(const Raster& raster, int index) {
  BandSurvey survey;
  survey.info = raster.band(index);
  const int width = raster.width();
  const int height = raster.height();
  const int rows_per_read = std::max(kRowsPerRead, survey.info.block_height);
  std::vector<double> window(static_cast<std::size_t>(width) * rows_per_read);
  RunningStats stats;
  for (int row = 0; row < height; row += rows_per_read) {
    const int rows = std::min(rows_per_read, height - row);
    raster.read(index, 0, row, width, rows, window.data());
    const std::size_t n = static_cast<std::size_t>(width) * rows;
    for (std::size_t i = 0; i < n; ++i) {
      const double value = window[i];
      if (!std::isfinite(value)) continue;
      if (survey.info.nodata && value == *survey.info.nodata) continue;
      stats.add(value);
    }
  }
  survey.valid_count = stats.count();
  survey.valid_fraction = static_cast<double>(stats.count()) / (static_cast<double>(width) * height);
  if (stats.count() > 0) {
    survey.min = stats.min();
    survey.max = stats.max();
    survey.mean = stats.mean();
    survey.std = stats.population_std();
  }
  return survey;
}

}  // namespace

RasterSurvey survey_raster(const std::filesystem::path& path) {
  const Raster raster = Raster::open(path);
  RasterSurvey survey;
  survey.path = path.string();
  survey.driver = raster.driver();
  survey.width = raster.width();
  survey.height = raster.height();
  survey.crs_wkt = raster.crs_wkt();
  if (survey.crs_wkt.empty()) {
    fail_runtime(path.string() + ": has no CRS, so its pixels cannot be placed on the ground; "
                 "assign one (for example gdal_edit.py -a_srs EPSG:32632 FILE)");
  }
  survey.epsg = raster.epsg();
  survey.geotransform = raster.geotransform();
  for (int i = 1; i <= raster.band_count(); ++i) survey.bands.push_back(survey_band(raster, i));
  return survey;
}

}  // namespace tinct
