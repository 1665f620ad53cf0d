// The grid every band of a scene is aligned onto: one CRS, north-up, square
// pixels of the target resolution, covering the area all the scene's bands share.
#pragma once

#include <string>
#include <vector>

#include "raster/raster.hpp"

namespace tinct {

struct TargetGrid {
  std::string crs_wkt;
  GeoTransform geotransform{};  // north-up: gt[2] == gt[4] == 0, gt[5] == -pixel_size
  int width = 0;
  int height = 0;

  double pixel_size() const { return geotransform[1]; }
  // Map coordinates of a pixel's centre (col, row may be fractional).
  double x_at(double col) const { return geotransform[0] + (col + 0.5) * geotransform[1]; }
  double y_at(double row) const { return geotransform[3] + (row + 0.5) * geotransform[5]; }
  double min_x() const { return geotransform[0]; }
  double max_x() const { return geotransform[0] + width * geotransform[1]; }
  double max_y() const { return geotransform[3]; }
  double min_y() const { return geotransform[3] + height * geotransform[5]; }
};

// Whether `raster` lies exactly on `grid` (same CRS, pixel size, origin and size),
// so it can be read directly without warping.
bool lies_on_grid(const Raster& raster, const TargetGrid& grid);

// The grid of pixel size `resolution` over the intersection of the rasters'
// extents, snapped to the first raster's origin. All rasters must share one CRS
// and be north-up; otherwise a clear error names the offending file.
TargetGrid shared_grid(const std::vector<const Raster*>& rasters, double resolution);

// Fails (runtime) unless `raster` (any CRS) covers part of `grid`; `role` names
// the raster in the message ("colour raster").
void require_overlap(const Raster& raster, const TargetGrid& grid, const std::string& role);

// Whether two CRS definitions (WKT) denote the same system.
bool same_crs(const std::string& wkt_a, const std::string& wkt_b);

}  // namespace tinct
