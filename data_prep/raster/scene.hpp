// An open scene on its target grid: the bands a job asks for, aligned and read
// window by window as stored values, with NaN wherever a band has no data or the
// mask drops the pixel. Memory is bounded by the window, never the scene.
#pragma once

#include <memory>
#include <string>
#include <vector>

#include "raster/aligned_source.hpp"
#include "raster/scene_spec.hpp"
#include "raster/target_grid.hpp"

namespace tinct {

class Scene {
 public:
  // `bands` in the order reads return them; `resolution` in metres.
  Scene(const SceneSpec& spec, const SensorProfile& profile, const std::vector<std::string>& bands,
        double resolution, const AlignSettings& settings);

  const SceneSpec& spec() const { return spec_; }
  const TargetGrid& grid() const { return grid_; }
  const std::vector<std::string>& bands() const { return bands_; }
  // GDAL type name of each requested band's file.
  std::vector<std::string> data_types() const;
  // Files that were warped onto the grid, with their pixel size, the grid's and the
  // method used (for the log): "b.tif: pixel size 28.5 -> 30 (average)".
  std::vector<std::string> alignment_notes() const;

  // out: bands().size() * width * height floats, band after band.
  void read(int col, int row, int width, int height, float* out) const;

 private:
  struct Slot {
    std::size_t source;  // index into sources_
    std::size_t plane;   // band position within that source
  };
  void apply_mask(int col, int row, int width, int height, float* out) const;

  SceneSpec spec_;
  std::vector<std::string> bands_;
  TargetGrid grid_;
  std::vector<std::unique_ptr<AlignedSource>> sources_;
  std::vector<Slot> slots_;
  std::unique_ptr<AlignedSource> mask_;
  mutable std::vector<float> buffer_;
  bool reads_in_order() const;
};

}  // namespace tinct
