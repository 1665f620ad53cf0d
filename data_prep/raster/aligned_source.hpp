// Bands of one file seen on a scene's target grid. A file already on the grid is
// read directly; any other is read through a warped VRT built by GDAL's own
// warper (the code behind gdalwarp), so values equal gdalwarp's with the same
// method. All bands of a file go through one dataset handle, so a pixel-
// interleaved tile is decoded once for all of them. Windowed reads only.
#pragma once

#include <cstdint>
#include <filesystem>
#include <optional>
#include <string>
#include <vector>

#include "raster/raster.hpp"
#include "raster/resampling.hpp"
#include "raster/target_grid.hpp"

namespace tinct {

class AlignedSource {
 public:
  // `bands` are 1-based indices into the file; `nodata` replaces the file's own
  // nodata where the file has none (e.g. from a sensor profile).
  AlignedSource(const std::filesystem::path& file, std::vector<int> bands, const TargetGrid& grid,
                const AlignSettings& settings, std::optional<double> nodata);

  std::size_t band_count() const { return bands_.size(); }
  bool warped() const { return warped_; }
  double source_pixel_size() const;  // the file's own pixel width, in its CRS units
  Resampling method() const { return method_; }
  const std::filesystem::path& file() const { return file_; }
  // GDAL type name of the file's first selected band (Byte, UInt16, Float32, ...).
  const std::string& data_type() const { return data_type_; }

  // Reads the window of every selected band, band after band (out: bands * w * h),
  // as stored values; NaN where the value is nodata or outside the file.
  void read(int col, int row, int width, int height, float* out) const;

 private:
  void read_unsigned16(int col, int row, int width, int height, float* out) const;

  std::filesystem::path file_;
  std::vector<int> bands_;
  // Declared in dependency order, so each outlives the VRTs built on it.
  Raster source_;
  std::optional<Raster> selection_;  // a VRT of the selected bands of source_
  std::optional<Raster> warped_view_;  // the selection warped onto the grid
  bool warped_ = false;
  Resampling method_ = Resampling::nearest;
  std::vector<std::optional<double>> nodata_;
  std::string data_type_;
  bool unsigned16_ = false;  // read as uint16 and widened here (every band Byte or UInt16, not warped)
  mutable std::vector<std::uint16_t> staging_;
};

}  // namespace tinct
