#include "raster/geotiff_writer.hpp"

#include <cpl_string.h>
#include <gdal_priv.h>
#include <ogr_spatialref.h>

#include <algorithm>
#include <cmath>
#include <limits>

#include "raster/gdal_session.hpp"
#include "util/atomic_file.hpp"
#include "util/error.hpp"
#include "util/write_failure.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

const std::vector<std::string> kCompressions = {"DEFLATE", "LZW", "ZSTD", "NONE"};
const std::vector<std::string> kResamplings = {"NEAREST", "AVERAGE", "MODE", "BILINEAR", "CUBIC"};

GDALDataType gdal_type(PixelType type) {
  switch (type) {
    case PixelType::uint8: return GDT_Byte;
    case PixelType::int16: return GDT_Int16;
    case PixelType::uint16: return GDT_UInt16;
    case PixelType::float32: return GDT_Float32;
  }
  return GDT_Unknown;
}

std::pair<double, double> type_range(PixelType type) {
  switch (type) {
    case PixelType::uint8: return {0, 255};
    case PixelType::int16: return {-32768, 32767};
    case PixelType::uint16: return {0, 65535};
    case PixelType::float32: break;
  }
  return {-std::numeric_limits<float>::max(), std::numeric_limits<float>::max()};
}

bool listed(const std::vector<std::string>& names, const std::string& name) {
  return std::find(names.begin(), names.end(), name) != names.end();
}

std::string joined(const std::vector<std::string>& names) {
  std::string text;
  for (const auto& name : names) text += (text.empty() ? "" : ", ") + name;
  return text;
}

void check_spec(const GeoTiffSpec& spec, const fs::path& target) {
  const std::string where = "GeoTIFF " + target.string() + ": ";
  if (spec.width <= 0 || spec.height <= 0) fail_usage(where + "width and height must be > 0");
  if (spec.bands.empty()) fail_usage(where + "at least one band is needed");
  OGRSpatialReference crs;
  if (spec.crs_wkt.empty() || crs.importFromWkt(spec.crs_wkt.c_str()) != OGRERR_NONE) {
    fail_usage(where + "crs_wkt is not a CRS in WKT");
  }
  const GeoTransform& gt = spec.geotransform;
  if (!std::all_of(gt.begin(), gt.end(), [](double v) { return std::isfinite(v); }) ||
      gt[1] * gt[5] - gt[2] * gt[4] == 0) {
    fail_usage(where + "the geotransform must be finite with a non-zero pixel size");
  }
  const int b = spec.block_size;
  if (b < 16 || b > 4096 || (b & (b - 1)) != 0) {
    fail_usage(where + "block_size must be a power of two from 16 to 4096, got " + std::to_string(b));
  }
  if (!listed(kCompressions, spec.compression)) {
    fail_usage(where + "compression must be one of " + joined(kCompressions) + ", got " + spec.compression);
  }
  if (!listed(kResamplings, spec.overview_resampling)) {
    fail_usage(where + "overview_resampling must be one of " + joined(kResamplings) + ", got " +
               spec.overview_resampling);
  }
  const auto [low, high] = type_range(spec.type);
  if (spec.nodata && (std::isnan(*spec.nodata) ? spec.type != PixelType::float32
                                               : *spec.nodata < low || *spec.nodata > high ||
                                                     (spec.type != PixelType::float32 &&
                                                      *spec.nodata != std::floor(*spec.nodata)))) {
    fail_usage(where + "nodata " + std::to_string(*spec.nodata) + " is not a " + to_string(spec.type) + " value");
  }
  if (!spec.colour_table.empty()) {
    if (spec.type != PixelType::uint8 && spec.type != PixelType::uint16) {
      fail_usage(where + "a colour table needs uint8 or uint16 values, not " + to_string(spec.type));
    }
    if (spec.colour_table.size() > static_cast<std::size_t>(high) + 1) {
      fail_usage(where + "the colour table has more entries than " + to_string(spec.type) + " values");
    }
  }
}

// GDAL's errors for a write, with the free space beside the file.
[[noreturn]] void fail_gdal_write(const fs::path& file, const std::string& step) {
  std::string reason = last_gdal_message();
  fail_write(file, step + (reason.empty() ? "" : ": GDAL: " + reason));
}

GDALDriver* driver(const char* name) {
  ensure_gdal();
  GDALDriver* found = GetGDALDriverManager()->GetDriverByName(name);
  if (found == nullptr) fail_runtime(std::string("GDAL lacks its ") + name + " driver; install Debian's libgdal32");
  return found;
}

fs::path hidden_sibling(const fs::path& target, const std::string& suffix) {
  fs::path file = temporary_sibling(target);
  file += suffix;
  return file;
}

}  // namespace

std::string to_string(PixelType type) {
  switch (type) {
    case PixelType::uint8: return "uint8";
    case PixelType::int16: return "int16";
    case PixelType::uint16: return "uint16";
    case PixelType::float32: return "float32";
  }
  return "unknown";
}

GeoTiffWriter::GeoTiffWriter(fs::path target, GeoTiffSpec spec)
    : target_(std::move(target)), spec_(std::move(spec)) {
  check_spec(spec_, target_);
  rows_file_ = hidden_sibling(target_, ".rows.tif");
  cog_file_ = hidden_sibling(target_, ".tif");
  const std::string block = std::to_string(spec_.block_size);
  CPLStringList options;
  options.SetNameValue("TILED", "YES");
  options.SetNameValue("BLOCKXSIZE", block.c_str());
  options.SetNameValue("BLOCKYSIZE", block.c_str());
  options.SetNameValue("INTERLEAVE", "BAND");
  options.SetNameValue("COMPRESS", "NONE");  // partly written tiles are rewritten in place
  options.SetNameValue("BIGTIFF", "IF_SAFER");
  CPLErrorReset();
  rows_ = driver("GTiff")->Create(rows_file_.c_str(), spec_.width, spec_.height,
                                  static_cast<int>(spec_.bands.size()), gdal_type(spec_.type), options.List());
  if (rows_ == nullptr) fail_gdal_write(target_, "cannot create the temporary " + rows_file_.string());
  describe(rows_);
}

GeoTiffWriter::~GeoTiffWriter() {
  if (!finished_) remove_temporaries();
}

void GeoTiffWriter::describe(GDALDataset* dataset) const {
  dataset->SetGeoTransform(const_cast<double*>(spec_.geotransform.data()));
  dataset->SetProjection(spec_.crs_wkt.c_str());
  for (const auto& [key, value] : spec_.metadata) dataset->SetMetadataItem(key.c_str(), value.c_str());
  for (std::size_t b = 0; b < spec_.bands.size(); ++b) {
    GDALRasterBand* band = dataset->GetRasterBand(static_cast<int>(b) + 1);
    band->SetDescription(spec_.bands[b].description.c_str());
    for (const auto& [key, value] : spec_.bands[b].metadata) band->SetMetadataItem(key.c_str(), value.c_str());
    if (spec_.nodata) band->SetNoDataValue(*spec_.nodata);
  }
  if (!spec_.colour_table.empty()) {
    GDALColorTable table;
    for (std::size_t i = 0; i < spec_.colour_table.size(); ++i) {
      const ColourEntry& c = spec_.colour_table[i];
      const GDALColorEntry entry{c.red, c.green, c.blue, 255};
      table.SetColorEntry(static_cast<int>(i), &entry);
    }
    dataset->GetRasterBand(1)->SetColorTable(&table);
    dataset->GetRasterBand(1)->SetColorInterpretation(GCI_PaletteIndex);
  }
}

void GeoTiffWriter::write_rows(const float* values, int rows) { write_block(values, rows, GDT_Float32, 4); }
void GeoTiffWriter::write_rows(const std::uint8_t* values, int rows) { write_block(values, rows, GDT_Byte, 1); }
void GeoTiffWriter::write_rows(const std::int16_t* values, int rows) { write_block(values, rows, GDT_Int16, 2); }
void GeoTiffWriter::write_rows(const std::uint16_t* values, int rows) { write_block(values, rows, GDT_UInt16, 2); }

void GeoTiffWriter::write_block(const void* values, int rows, int gdal_type, int value_bytes) {
  if (rows_ == nullptr) fail_runtime("GeoTIFF " + target_.string() + ": rows written after finish()");
  if (rows <= 0 || rows_written_ + rows > spec_.height) {
    fail_runtime("GeoTIFF " + target_.string() + ": " + std::to_string(rows) + " rows after row " +
                 std::to_string(rows_written_) + " exceed its " + std::to_string(spec_.height) + " rows");
  }
  CPLErrorReset();
  const CPLErr status = rows_->RasterIO(GF_Write, 0, rows_written_, spec_.width, rows, const_cast<void*>(values),
                                        spec_.width, rows, static_cast<GDALDataType>(gdal_type),
                                        static_cast<int>(spec_.bands.size()), nullptr, 0, 0, 0, nullptr);
  if (status != CE_None) {
    const auto bytes = static_cast<std::int64_t>(spec_.width) * rows * value_bytes *
                       static_cast<std::int64_t>(spec_.bands.size());
    fail_write(rows_file_, "rows " + std::to_string(rows_written_) + " to " + std::to_string(rows_written_ + rows) +
                               ": GDAL: " + last_gdal_message(), bytes);
  }
  rows_written_ += rows;
}

void GeoTiffWriter::finish() {
  if (rows_ == nullptr) fail_runtime("GeoTIFF " + target_.string() + ": finish() called twice");
  if (rows_written_ != spec_.height) {
    fail_runtime("GeoTIFF " + target_.string() + ": " + std::to_string(rows_written_) + " of " +
                 std::to_string(spec_.height) + " rows written; write every row before finish()");
  }
  CPLErrorReset();
  rows_->FlushCache(false);
  const bool flushed = CPLGetLastErrorType() != CE_Failure;
  GDALClose(rows_);
  rows_ = nullptr;
  if (!flushed || CPLGetLastErrorType() == CE_Failure) fail_gdal_write(rows_file_, "flushing the rows");

  const Raster source = Raster::open(rows_file_);
  CPLStringList options;
  options.SetNameValue("COMPRESS", spec_.compression.c_str());
  options.SetNameValue("BLOCKSIZE", std::to_string(spec_.block_size).c_str());
  options.SetNameValue("OVERVIEWS", "AUTO");
  options.SetNameValue("OVERVIEW_RESAMPLING", spec_.overview_resampling.c_str());
  options.SetNameValue("BIGTIFF", "IF_SAFER");
  CPLErrorReset();
  GDALDataset* cog = driver("COG")->CreateCopy(cog_file_.c_str(), source.handle(), /*bStrict=*/TRUE,
                                               options.List(), nullptr, nullptr);
  if (cog == nullptr) fail_gdal_write(target_, "the cloud-optimised copy failed");
  GDALClose(cog);
  if (CPLGetLastErrorType() == CE_Failure) fail_gdal_write(target_, "closing the cloud-optimised copy");
  commit_file(cog_file_, target_);
  finished_ = true;
  remove_temporaries();
}

void GeoTiffWriter::remove_temporaries() {
  if (rows_ != nullptr) {
    GDALClose(rows_);
    rows_ = nullptr;
  }
  std::error_code ec;
  for (const fs::path& file : {rows_file_, cog_file_}) {
    if (file.empty()) continue;
    for (const char* suffix : {"", ".aux.xml", ".ovr", ".ovr.tmp", ".msk"}) {
      fs::path side = file;
      side += suffix;
      fs::remove(side, ec);
    }
  }
}

}  // namespace tinct
