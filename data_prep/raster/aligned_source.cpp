#include "raster/aligned_source.hpp"

#include <gdal_priv.h>
#include <gdal_utils.h>

#include <atomic>
#include <cmath>
#include <limits>

#include "raster/gdal_session.hpp"
#include "util/error.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

std::string number_text(double value) {
  char text[64];
  std::snprintf(text, sizeof(text), "%.17g", value);
  return text;
}

class ArgumentList {
 public:
  ArgumentList& add(const std::string& value) {
    values_.push_back(value);
    return *this;
  }
  char** argv() {
    pointers_.clear();
    for (auto& value : values_) pointers_.push_back(value.data());
    pointers_.push_back(nullptr);
    return pointers_.data();
  }

 private:
  std::vector<std::string> values_;
  std::vector<char*> pointers_;
};

std::string unique_vsimem_name(const std::string& stem) {
  static std::atomic<int> counter{0};
  return "/vsimem/tinct_" + stem + "_" + std::to_string(counter++) + ".vrt";
}

// A VRT holding only the selected bands, with `nodata` set where the file has none.
GDALDatasetH select_bands(const Raster& source, const std::vector<int>& bands,
                          const std::vector<std::optional<double>>& nodata) {
  ArgumentList args;
  args.add("-of").add("VRT");
  for (int band : bands) args.add("-b").add(std::to_string(band));
  GDALTranslateOptions* options = GDALTranslateOptionsNew(args.argv(), nullptr);
  GDALDatasetH selected = GDALTranslate(unique_vsimem_name("bands").c_str(), source.handle(), options,
                                        nullptr);
  GDALTranslateOptionsFree(options);
  if (!selected) {
    fail_runtime(source.path().string() + ": cannot select bands: " + last_gdal_message());
  }
  for (std::size_t i = 0; i < bands.size(); ++i) {
    if (nodata[i]) GDALSetRasterNoDataValue(GDALGetRasterBand(selected, static_cast<int>(i) + 1), *nodata[i]);
  }
  return selected;
}

GDALDataset* warp_onto(GDALDatasetH selected, const fs::path& file, const TargetGrid& grid,
                       Resampling method) {
  ArgumentList args;
  args.add("-of").add("VRT").add("-ot").add("Float32").add("-dstnodata").add("nan");
  args.add("-t_srs").add(grid.crs_wkt);
  args.add("-te").add(number_text(grid.min_x())).add(number_text(grid.min_y()))
      .add(number_text(grid.max_x())).add(number_text(grid.max_y()));
  args.add("-ts").add(std::to_string(grid.width)).add(std::to_string(grid.height));
  args.add("-r").add(to_string(method));
  GDALWarpAppOptions* options = GDALWarpAppOptionsNew(args.argv(), nullptr);
  int usage_error = 0;
  GDALDatasetH warped =
      GDALWarp(unique_vsimem_name("warp").c_str(), nullptr, 1, &selected, options, &usage_error);
  GDALWarpAppOptionsFree(options);
  if (!warped) {
    fail_runtime(file.string() + ": cannot align onto the scene grid: " + last_gdal_message());
  }
  return GDALDataset::FromHandle(warped);
}

}  // namespace

AlignedSource::AlignedSource(const fs::path& file, std::vector<int> bands, const TargetGrid& grid,
                             const AlignSettings& settings, std::optional<double> nodata)
    : file_(file), bands_(std::move(bands)), source_(Raster::open(file)) {
  for (int band : bands_) {
    if (band < 1 || band > source_.band_count()) {
      fail_runtime(file.string() + ": has " + std::to_string(source_.band_count()) + " bands, band " +
                   std::to_string(band) + " was asked for");
    }
    const BandInfo info = source_.band(band);
    nodata_.push_back(info.nodata ? info.nodata : nodata);
  }
  data_type_ = source_.band(bands_.front()).data_type;
  unsigned16_ = true;
  for (int band : bands_) {
    const std::string type = source_.band(band).data_type;
    unsigned16_ = unsigned16_ && (type == "Byte" || type == "UInt16");
  }
  if (lies_on_grid(source_, grid)) return;
  unsigned16_ = false;
  method_ = choose_resampling(std::fabs(source_.geotransform()[1]), grid.pixel_size(), settings);
  selection_.emplace(Raster::adopt(GDALDataset::FromHandle(select_bands(source_, bands_, nodata_)), file));
  warped_view_.emplace(Raster::adopt(warp_onto(selection_->handle(), file, grid, method_), file));
  warped_ = true;
}

double AlignedSource::source_pixel_size() const { return std::fabs(source_.geotransform()[1]); }

void AlignedSource::read(int col, int row, int width, int height, float* out) const {
  const std::size_t plane = static_cast<std::size_t>(width) * height;
  if (unsigned16_) {
    read_unsigned16(col, row, width, height, out);
    return;
  }
  std::vector<int> view_bands = bands_;
  if (warped_) {
    for (std::size_t k = 0; k < view_bands.size(); ++k) view_bands[k] = static_cast<int>(k) + 1;
  }
  (warped_ ? *warped_view_ : source_).read_bands(view_bands, col, row, width, height, out);
  for (std::size_t k = 0; k < bands_.size(); ++k) {
    if (warped_ || !nodata_[k]) continue;  // warped views already carry NaN
    const float nodata = static_cast<float>(*nodata_[k]);
    float* values = out + k * plane;
    for (std::size_t i = 0; i < plane; ++i) {
      if (values[i] == nodata) values[i] = std::numeric_limits<float>::quiet_NaN();
    }
  }
}

// GDAL copies the decoded tiles as 16-bit values, then one pass widens them and marks
// nodata: fewer bytes moved than GDAL's widening followed by a nodata pass.
void AlignedSource::read_unsigned16(int col, int row, int width, int height, float* out) const {
  const std::size_t plane = static_cast<std::size_t>(width) * height;
  staging_.resize(bands_.size() * plane);
  source_.read_bands(bands_, col, row, width, height, staging_.data());
  const float nan = std::numeric_limits<float>::quiet_NaN();
  for (std::size_t k = 0; k < bands_.size(); ++k) {
    const std::uint16_t* from = staging_.data() + k * plane;
    float* values = out + k * plane;
    if (!nodata_[k]) {
      for (std::size_t i = 0; i < plane; ++i) values[i] = from[i];
      continue;
    }
    const float nodata = static_cast<float>(*nodata_[k]);
    for (std::size_t i = 0; i < plane; ++i) {
      const float v = from[i];
      values[i] = v == nodata ? nan : v;
    }
  }
}

}  // namespace tinct
