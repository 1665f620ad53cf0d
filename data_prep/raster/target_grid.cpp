#include "raster/target_grid.hpp"

#include <ogr_spatialref.h>

#include <algorithm>
#include <cmath>
#include <memory>

#include "util/error.hpp"
#include "util/number_text.hpp"

namespace tinct {
namespace {

constexpr double kTolerance = 1e-6;  // in pixels: below this, grids are taken as equal

void require_north_up(const Raster& raster) {
  const GeoTransform gt = raster.geotransform();
  if (gt[2] != 0 || gt[4] != 0 || gt[5] >= 0) {
    fail_runtime(raster.path().string() + ": the grid is rotated or not north-up; warp it to a "
                 "north-up grid first (gdalwarp)");
  }
}

struct Extent {
  double min_x, max_x, min_y, max_y;
};

Extent extent_of(const Raster& raster) {
  const GeoTransform gt = raster.geotransform();
  return {gt[0], gt[0] + raster.width() * gt[1], gt[3] + raster.height() * gt[5], gt[3]};
}

bool overlap(const Extent& a, const Extent& b) {
  return std::max(a.min_x, b.min_x) < std::min(a.max_x, b.max_x) &&
         std::max(a.min_y, b.min_y) < std::min(a.max_y, b.max_y);
}

// Names the band file that overlaps the fewest others (the later one of a tie: with two
// files, the first is taken as the scene), not just the first file of the scene.
[[noreturn]] void fail_disjoint(const std::vector<const Raster*>& rasters) {
  std::size_t odd = 0, fewest = rasters.size();
  for (std::size_t i = 0; i < rasters.size(); ++i) {
    std::size_t overlapping = 0;
    for (std::size_t j = 0; j < rasters.size(); ++j) {
      overlapping += j != i && overlap(extent_of(*rasters[i]), extent_of(*rasters[j]));
    }
    if (overlapping <= fewest) odd = i, fewest = overlapping;
  }
  const Extent e = extent_of(*rasters[odd]);
  std::string others;
  for (std::size_t j = 0; j < rasters.size(); ++j) {
    if (j != odd) others += (others.empty() ? "" : ", ") + rasters[j]->path().filename().string();
  }
  fail_runtime(rasters[odd]->path().string() + ": this band file (x " + fixed_text(e.min_x) + " to " +
               fixed_text(e.max_x) + ", y " + fixed_text(e.min_y) + " to " + fixed_text(e.max_y) +
               ") shares no area with the scene's other band files (" + others +
               "); every band file of a scene must show the same area: check its path "
               "in the config");
}

}  // namespace

bool same_crs(const std::string& wkt_a, const std::string& wkt_b) {
  if (wkt_a == wkt_b) return true;
  OGRSpatialReference a, b;
  if (a.importFromWkt(wkt_a.c_str()) != OGRERR_NONE || b.importFromWkt(wkt_b.c_str()) != OGRERR_NONE) {
    return false;
  }
  return a.IsSame(&b) != 0;
}

bool lies_on_grid(const Raster& raster, const TargetGrid& grid) {
  if (raster.width() != grid.width || raster.height() != grid.height) return false;
  const GeoTransform gt = raster.geotransform();
  for (int i = 0; i < 6; ++i) {
    if (std::fabs(gt[i] - grid.geotransform[i]) > kTolerance * grid.pixel_size()) return false;
  }
  return same_crs(raster.crs_wkt(), grid.crs_wkt);
}

void require_overlap(const Raster& raster, const TargetGrid& grid, const std::string& role) {
  const std::string wkt = raster.crs_wkt();
  if (wkt.empty()) fail_runtime(raster.path().string() + ": the " + role + " has no CRS; assign one first");
  const GeoTransform gt = raster.geotransform();
  double min_x = gt[0], max_x = gt[0] + raster.width() * gt[1];
  double max_y = gt[3], min_y = gt[3] + raster.height() * gt[5];
  if (min_x > max_x) std::swap(min_x, max_x);
  if (min_y > max_y) std::swap(min_y, max_y);
  if (!same_crs(wkt, grid.crs_wkt)) {
    OGRSpatialReference source, target;
    source.importFromWkt(wkt.c_str());
    target.importFromWkt(grid.crs_wkt.c_str());
    source.SetAxisMappingStrategy(OAMS_TRADITIONAL_GIS_ORDER);
    target.SetAxisMappingStrategy(OAMS_TRADITIONAL_GIS_ORDER);
    std::unique_ptr<OGRCoordinateTransformation> transform(OGRCreateCoordinateTransformation(&source, &target));
    double x0, y0, x1, y1;
    if (!transform || !transform->TransformBounds(min_x, min_y, max_x, max_y, &x0, &y0, &x1, &y1, 21)) {
      fail_runtime(raster.path().string() + ": cannot transform the " + role + "'s extent into the scene's CRS");
    }
    min_x = x0, min_y = y0, max_x = x1, max_y = y1;
  }
  if (max_x <= grid.min_x() || min_x >= grid.max_x() || max_y <= grid.min_y() || min_y >= grid.max_y()) {
    fail_runtime(raster.path().string() + ": the " + role + " does not overlap the scene's bands; "
                 "check that it shows the same area (and its CRS)");
  }
}

TargetGrid shared_grid(const std::vector<const Raster*>& rasters, double resolution) {
  if (rasters.empty()) fail_usage("a scene needs at least one band file");
  const Raster& first = *rasters.front();
  TargetGrid grid;
  grid.crs_wkt = first.crs_wkt();
  if (grid.crs_wkt.empty()) {
    fail_runtime(first.path().string() + ": has no CRS; assign one (gdal_edit.py -a_srs EPSG:XXXX)");
  }
  double min_x = -1e300, max_x = 1e300, min_y = -1e300, max_y = 1e300;
  for (const Raster* raster : rasters) {
    require_north_up(*raster);
    if (!same_crs(raster->crs_wkt(), grid.crs_wkt)) {
      fail_runtime(raster->path().string() + ": its CRS differs from " + first.path().string() +
                   "'s; all band files of one scene must share a CRS (reproject with gdalwarp)");
    }
    const GeoTransform gt = raster->geotransform();
    min_x = std::max(min_x, gt[0]);
    max_x = std::min(max_x, gt[0] + raster->width() * gt[1]);
    max_y = std::min(max_y, gt[3]);
    min_y = std::max(min_y, gt[3] + raster->height() * gt[5]);
  }
  if (min_x >= max_x || min_y >= max_y) fail_disjoint(rasters);
  // Snap the shared extent inwards onto the first file's origin at the target resolution.
  const GeoTransform origin = first.geotransform();
  const double col0 = std::ceil((min_x - origin[0]) / resolution - kTolerance);
  const double row0 = std::ceil((origin[3] - max_y) / resolution - kTolerance);
  const double col1 = std::floor((max_x - origin[0]) / resolution + kTolerance);
  const double row1 = std::floor((origin[3] - min_y) / resolution + kTolerance);
  grid.geotransform = {origin[0] + col0 * resolution, resolution, 0.0,
                       origin[3] - row0 * resolution, 0.0, -resolution};
  grid.width = static_cast<int>(col1 - col0);
  grid.height = static_cast<int>(row1 - row0);
  if (grid.width <= 0 || grid.height <= 0) {
    fail_runtime(first.path().string() + ": the shared area of the scene's bands is smaller than one " +
                 std::to_string(resolution) + " m pixel");
  }
  return grid;
}

}  // namespace tinct
