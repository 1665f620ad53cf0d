// Writes a cloud-optimised GeoTIFF (maps) by row blocks: rows go through GDAL's
// bounded block cache into an uncompressed tiled GeoTIFF beside the target, which
// finish() copies with GDAL's COG driver (tiled, compressed, overviews) to a
// temporary name and renames over the target. Memory stays within GDAL's block
// cache whatever the raster size; the temporary needs the uncompressed size on disk.
#pragma once

#include <cstdint>
#include <filesystem>
#include <map>
#include <optional>
#include <string>
#include <vector>

#include "raster/raster.hpp"

class GDALDataset;

namespace tinct {

enum class PixelType { uint8, int16, uint16, float32 };

struct ColourEntry {  // no alpha: a GeoTIFF palette is RGB (nodata marks what to leave out)
  std::uint8_t red = 0, green = 0, blue = 0;
};

struct OutputBand {
  std::string description;
  std::map<std::string, std::string> metadata;
};

struct GeoTiffSpec {
  int width = 0, height = 0;
  PixelType type = PixelType::float32;
  std::vector<OutputBand> bands;
  std::string crs_wkt;
  GeoTransform geotransform{0, 1, 0, 0, 0, -1};
  std::optional<double> nodata;  // one value for every band: GeoTIFF stores one
  std::vector<ColourEntry> colour_table;  // band 1, entry i for value i; uint8 or uint16 only
  std::map<std::string, std::string> metadata;  // dataset level
  int block_size = 512;           // tile edge of the COG, a power of two >= 16
  std::string compression = "DEFLATE";
  std::string overview_resampling = "NEAREST";  // AVERAGE for continuous values
};

class GeoTiffWriter {
 public:
  // Checks the spec (usage errors name the field) and creates the row file.
  GeoTiffWriter(std::filesystem::path target, GeoTiffSpec spec);
  ~GeoTiffWriter();  // without finish(): removes every temporary file
  GeoTiffWriter(const GeoTiffWriter&) = delete;
  GeoTiffWriter& operator=(const GeoTiffWriter&) = delete;

  // The next `rows` rows of every band: bands x rows x width values, band after band.
  // Values are converted to the file's type (rounded and clamped for integers).
  void write_rows(const float* values, int rows);
  void write_rows(const std::uint8_t* values, int rows);
  void write_rows(const std::int16_t* values, int rows);
  void write_rows(const std::uint16_t* values, int rows);

  int rows_written() const { return rows_written_; }
  // Copies to a COG and renames it over the target; every row must be written.
  void finish();

 private:
  void write_block(const void* values, int rows, int gdal_type, int value_bytes);
  void describe(GDALDataset* dataset) const;
  void remove_temporaries();

  std::filesystem::path target_;
  GeoTiffSpec spec_;
  std::filesystem::path rows_file_;  // uncompressed tiled GTiff, written row block by row block
  std::filesystem::path cog_file_;   // the COG under a temporary name
  GDALDataset* rows_ = nullptr;
  int rows_written_ = 0;
  bool finished_ = false;
};

std::string to_string(PixelType type);

}  // namespace tinct
