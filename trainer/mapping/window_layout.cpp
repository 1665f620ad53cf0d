#include "mapping/window_layout.hpp"

#include <string>

#include "util/error.hpp"

namespace tinct {

WindowLayout window_layout(const TargetGrid& grid, int size, int stride, const std::string& scene_id) {
  if (grid.width < size || grid.height < size) {
    fail_usage("scene " + scene_id + " is " + std::to_string(grid.width) + " x " + std::to_string(grid.height) +
               " px on the map grid, smaller than one " + std::to_string(size) + " px window of the run");
  }
  WindowLayout layout;
  layout.size = size;
  layout.stride = stride;
  layout.columns = (grid.width - size) / stride + 1;
  layout.rows = (grid.height - size) / stride + 1;
  const GeoTransform& gt = grid.geotransform;
  const int offset = layout.cell_offset();
  layout.cells = {gt[0] + offset * gt[1], gt[1] * stride, 0.0, gt[3] + offset * gt[5], 0.0, gt[5] * stride};
  return layout;
}

}  // namespace tinct
