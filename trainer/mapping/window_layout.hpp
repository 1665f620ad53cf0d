// Where a map's windows lie on a scene's grid and which output cell each one fills.
// Window (col, row) covers scene pixels [col * stride, col * stride + size) across and
// likewise down; its cell is the stride x stride block around the window's centre pixel
// (size / 2, the label's pixel in a chip), so cells tile the scene without gaps and the
// output grid is the scene's with pixels stride times larger, its origin at the first
// window's cell.
#pragma once

#include "raster/raster.hpp"
#include "raster/target_grid.hpp"

namespace tinct {

struct WindowLayout {
  int size = 0, stride = 0;
  int columns = 0, rows = 0;  // windows across and down
  GeoTransform cells{};       // the output grid's geotransform

  // Scene pixel offset of a window's cell from its window's top-left pixel.
  int cell_offset() const { return size / 2 - stride / 2; }
  // Scene rows a block of window rows [first, first + count) reads.
  int first_pixel_row(int first_window_row) const { return first_window_row * stride; }
  int pixel_rows(int window_rows) const { return (window_rows - 1) * stride + size; }
  int pixel_columns() const { return (columns - 1) * stride + size; }
};

// Fails (usage) when the grid is smaller than one window.
WindowLayout window_layout(const TargetGrid& grid, int size, int stride, const std::string& scene_id);

}  // namespace tinct
