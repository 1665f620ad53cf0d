#include "raster/raster.hpp"

#include <gdal_priv.h>
#include <ogr_spatialref.h>

#include "raster/gdal_session.hpp"
#include "util/error.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

template <typename T>
void read_window(GDALDataset* dataset, const fs::path& path, int index, int col, int row, int width,
                 int height, T* out, GDALDataType type) {
  if (index < 1 || index > dataset->GetRasterCount()) {
    fail_runtime(path.string() + ": band " + std::to_string(index) + " does not exist (the raster has " +
                 std::to_string(dataset->GetRasterCount()) + " bands)");
  }
  if (col < 0 || row < 0 || col + width > dataset->GetRasterXSize() ||
      row + height > dataset->GetRasterYSize()) {
    fail_runtime(path.string() + ": window " + std::to_string(col) + "," + std::to_string(row) + " " +
                 std::to_string(width) + "x" + std::to_string(height) + " lies outside the raster");
  }
  const CPLErr status = dataset->GetRasterBand(index)->RasterIO(
      GF_Read, col, row, width, height, out, width, height, type, 0, 0, nullptr);
  if (status != CE_None) {
    fail_runtime(path.string() + ": band " + std::to_string(index) + ": read failed at col " +
                 std::to_string(col) + ", row " + std::to_string(row) + ": " + last_gdal_message() +
                 "; the file may be truncated or corrupt");
  }
}

}  // namespace

Raster::Raster(fs::path path, GDALDataset* dataset) : path_(std::move(path)), dataset_(dataset) {}

Raster::Raster(Raster&& other) noexcept : path_(std::move(other.path_)), dataset_(other.dataset_) {
  other.dataset_ = nullptr;
}

Raster& Raster::operator=(Raster&& other) noexcept {
  if (this != &other) {
    if (dataset_) GDALClose(dataset_);
    path_ = std::move(other.path_);
    dataset_ = other.dataset_;
    other.dataset_ = nullptr;
  }
  return *this;
}

Raster::~Raster() {
  if (dataset_) GDALClose(dataset_);
}

Raster Raster::open(const fs::path& path) {
  ensure_gdal();
  const bool is_virtual = path.string().rfind("/vsi", 0) == 0;
  if (!is_virtual && !fs::exists(path)) {
    // A missing input is a usage error (exit 2) everywhere, like a missing config.
    fail_usage(path.string() + ": file not found; check the path");
  }
  CPLErrorReset();
  auto* dataset = static_cast<GDALDataset*>(
      GDALOpenEx(path.c_str(), GDAL_OF_RASTER | GDAL_OF_READONLY, nullptr, nullptr, nullptr));
  if (!dataset) {
    std::string reason = last_gdal_message();
    if (reason.empty()) reason = "no GDAL driver recognises it";
    fail_runtime(path.string() + ": not a readable raster (" + reason +
                 "); give a GeoTIFF, VRT or another format GDAL reads");
  }
  if (dataset->GetRasterCount() == 0) {
    GDALClose(dataset);
    fail_runtime(path.string() + ": holds no raster bands (is it a vector file or a container "
                 "with subdatasets? open one subdataset instead)");
  }
  return Raster(path, dataset);
}

Raster Raster::adopt(GDALDataset* dataset, const fs::path& label) {
  if (!dataset) fail_runtime(label.string() + ": GDAL could not build the dataset: " + last_gdal_message());
  return Raster(label, dataset);
}

std::string Raster::driver() const { return dataset_->GetDriver()->GetDescription(); }
int Raster::width() const { return dataset_->GetRasterXSize(); }
int Raster::height() const { return dataset_->GetRasterYSize(); }
int Raster::band_count() const { return dataset_->GetRasterCount(); }

BandInfo Raster::band(int index) const {
  GDALRasterBand* band = dataset_->GetRasterBand(index);
  if (!band) fail_runtime(path_.string() + ": band " + std::to_string(index) + " does not exist");
  BandInfo info;
  info.index = index;
  info.description = band->GetDescription();
  info.data_type = GDALGetDataTypeName(band->GetRasterDataType());
  int has_nodata = 0;
  const double nodata = band->GetNoDataValue(&has_nodata);
  if (has_nodata) info.nodata = nodata;
  info.overview_count = band->GetOverviewCount();
  band->GetBlockSize(&info.block_width, &info.block_height);
  return info;
}

std::optional<int> Raster::band_by_description(const std::string& name) const {
  for (int i = 1; i <= band_count(); ++i) {
    if (name == dataset_->GetRasterBand(i)->GetDescription()) return i;
  }
  return std::nullopt;
}

bool Raster::has_geotransform() const {
  double gt[6];
  return dataset_->GetGeoTransform(gt) == CE_None;
}

GeoTransform Raster::geotransform() const {
  GeoTransform gt{0, 1, 0, 0, 0, 1};
  if (dataset_->GetGeoTransform(gt.data()) != CE_None) {
    fail_runtime(path_.string() + ": has no geotransform; georeference it first (e.g. gdal_translate -a_ullr)");
  }
  return gt;
}

std::string Raster::crs_wkt() const {
  const OGRSpatialReference* srs = dataset_->GetSpatialRef();
  if (!srs || srs->IsEmpty()) return "";
  char* wkt = nullptr;
  const char* options[] = {"FORMAT=WKT2_2018", nullptr};
  srs->exportToWkt(&wkt, options);
  std::string text = wkt ? wkt : "";
  CPLFree(wkt);
  return text;
}

std::optional<int> Raster::epsg() const {
  const OGRSpatialReference* stored = dataset_->GetSpatialRef();
  if (!stored || stored->IsEmpty()) return std::nullopt;
  OGRSpatialReference srs(*stored);
  const char* authority = srs.GetAuthorityName(nullptr);
  if (!authority || std::string(authority) != "EPSG") {
    if (srs.AutoIdentifyEPSG() != OGRERR_NONE) return std::nullopt;
    authority = srs.GetAuthorityName(nullptr);
  }
  const char* code = srs.GetAuthorityCode(nullptr);
  if (!authority || std::string(authority) != "EPSG" || !code) return std::nullopt;
  return std::stoi(code);
}

void Raster::read(int index, int col, int row, int width, int height, double* out) const {
  read_window(dataset_, path_, index, col, row, width, height, out, GDT_Float64);
}

void Raster::read(int index, int col, int row, int width, int height, float* out) const {
  read_window(dataset_, path_, index, col, row, width, height, out, GDT_Float32);
}

void Raster::read_bands(const std::vector<int>& indices, int col, int row, int width, int height,
                        float* out) const {
  read_bands_as(indices, col, row, width, height, GDT_Float32, out);
}

void Raster::read_bands(const std::vector<int>& indices, int col, int row, int width, int height,
                        std::uint16_t* out) const {
  read_bands_as(indices, col, row, width, height, GDT_UInt16, out);
}

void Raster::read_bands_as(const std::vector<int>& indices, int col, int row, int width, int height, int gdal_type,
                           void* out) const {
  for (int index : indices) {
    if (index < 1 || index > band_count()) {
      fail_runtime(path_.string() + ": band " + std::to_string(index) + " does not exist (the raster has " +
                   std::to_string(band_count()) + " bands)");
    }
  }
  if (col < 0 || row < 0 || col + width > this->width() || row + height > this->height()) {
    fail_runtime(path_.string() + ": window " + std::to_string(col) + "," + std::to_string(row) + " " +
                 std::to_string(width) + "x" + std::to_string(height) + " lies outside the raster");
  }
  std::vector<int> map(indices);
  const CPLErr status = dataset_->RasterIO(GF_Read, col, row, width, height, out, width, height,
                                           static_cast<GDALDataType>(gdal_type), static_cast<int>(map.size()),
                                           map.data(), 0, 0, 0, nullptr);
  if (status != CE_None) {
    fail_runtime(path_.string() + ": read failed at col " + std::to_string(col) + ", row " +
                 std::to_string(row) + ": " + last_gdal_message() + "; the file may be truncated or corrupt");
  }
}

std::string Raster::metadata(const std::string& key, const std::string& domain) const {
  const char* value = dataset_->GetMetadataItem(key.c_str(), domain.c_str());
  return value ? value : "";
}

std::vector<std::pair<std::string, std::string>> Raster::metadata_items(int band) const {
  GDALMajorObject* object = dataset_;
  if (band > 0) {
    if (band > band_count()) return {};
    object = dataset_->GetRasterBand(band);
  }
  std::vector<std::pair<std::string, std::string>> items;
  char** list = object->GetMetadata("");
  for (int i = 0; list && list[i]; ++i) {
    char* key = nullptr;
    const char* value = CPLParseNameValue(list[i], &key);
    if (key && value) items.emplace_back(key, value);
    CPLFree(key);
  }
  return items;
}

}  // namespace tinct
