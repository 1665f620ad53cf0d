#include "raster/vrt_mosaic.hpp"

#include <gdal_priv.h>
#include <gdal_utils.h>

#include <string>

#include "raster/gdal_session.hpp"
#include "util/error.hpp"

namespace tinct {

void build_vrt_mosaic(const std::filesystem::path& vrt, const std::vector<std::filesystem::path>& sources) {
  ensure_gdal();
  std::vector<std::string> names;
  for (const auto& source : sources) names.push_back(source.string());
  std::vector<const char*> pointers;
  for (const auto& name : names) pointers.push_back(name.c_str());
  GDALBuildVRTOptions* options = GDALBuildVRTOptionsNew(nullptr, nullptr);
  int usage_error = 0;
  CPLErrorReset();
  GDALDatasetH dataset = GDALBuildVRT(vrt.c_str(), static_cast<int>(pointers.size()), nullptr, pointers.data(),
                                      options, &usage_error);
  GDALBuildVRTOptionsFree(options);
  if (dataset == nullptr) {
    fail_runtime(vrt.string() + ": GDAL could not build the mosaic: " + last_gdal_message());
  }
  GDALClose(dataset);
}

}  // namespace tinct
