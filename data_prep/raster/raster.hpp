// An open raster (any GDAL dataset: GeoTIFF, VRT, JP2, ...) with RAII ownership.
// Windowed reads only: callers ask for a rectangle, never the whole scene.
#pragma once

#include <array>
#include <cstdint>
#include <filesystem>
#include <memory>
#include <optional>
#include <string>
#include <utility>
#include <vector>

class GDALDataset;

namespace tinct {

// GDAL's affine geotransform: x = gt[0] + col*gt[1] + row*gt[2], y = gt[3] + col*gt[4] + row*gt[5].
using GeoTransform = std::array<double, 6>;

struct BandInfo {
  int index = 0;  // 1-based, as GDAL counts
  std::string description;
  std::string data_type;  // GDAL's name: Byte, UInt16, Float32, ...
  std::optional<double> nodata;
  int overview_count = 0;
  int block_width = 0;
  int block_height = 0;
};

class Raster {
 public:
  // Opens read-only; a missing file or a file GDAL cannot read is a clear error.
  static Raster open(const std::filesystem::path& path);
  // Takes ownership of a dataset made in memory (a warped VRT); `label` names it in errors.
  static Raster adopt(GDALDataset* dataset, const std::filesystem::path& label);
  Raster(Raster&&) noexcept;
  Raster& operator=(Raster&&) noexcept;
  ~Raster();

  const std::filesystem::path& path() const { return path_; }
  std::string driver() const;
  int width() const;
  int height() const;
  int band_count() const;
  BandInfo band(int index) const;
  // The band whose description (or GDAL band name) equals `name`, 1-based.
  std::optional<int> band_by_description(const std::string& name) const;

  bool has_geotransform() const;
  GeoTransform geotransform() const;
  std::string crs_wkt() const;  // "" when the raster has no CRS
  std::optional<int> epsg() const;

  // Reads band `index` (1-based) over the window into `out` (width*height values),
  // converting to double. Fails with the file and window on an I/O error.
  void read(int index, int col, int row, int width, int height, double* out) const;
  void read(int index, int col, int row, int width, int height, float* out) const;
  // Reads several bands over one window in a single call (band after band in `out`),
  // so a pixel-interleaved file decodes each tile once.
  void read_bands(const std::vector<int>& indices, int col, int row, int width, int height,
                  float* out) const;
  // The same as unsigned 16-bit values (for Byte and UInt16 bands: half the bytes to copy).
  void read_bands(const std::vector<int>& indices, int col, int row, int width, int height,
                  std::uint16_t* out) const;
  // Metadata item of the dataset (domain "" by default), "" when absent.
  std::string metadata(const std::string& key, const std::string& domain = "") const;
  // Every KEY=VALUE item of the default domain: of the dataset (band 0) or of a band.
  std::vector<std::pair<std::string, std::string>> metadata_items(int band = 0) const;

  GDALDataset* handle() const { return dataset_; }

 private:
  Raster(std::filesystem::path path, GDALDataset* dataset);
  void read_bands_as(const std::vector<int>& indices, int col, int row, int width, int height, int gdal_type,
                     void* out) const;
  std::filesystem::path path_;
  GDALDataset* dataset_ = nullptr;
};

}  // namespace tinct
