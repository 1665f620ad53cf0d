#include "raster/gdal_session.hpp"

#include <cpl_conv.h>
#include <cpl_error.h>
#include <gdal.h>

#include <mutex>

#include "util/log.hpp"

namespace tinct {
namespace {

constexpr GIntBig kBlockCacheBytes = 64LL * 1024 * 1024;

void route_to_log(CPLErr level, CPLErrorNum, const char* message) {
  // Failures are re-raised as tinct errors with context by the caller; only
  // warnings are worth showing on their own.
  if (level == CE_Warning) {
    log::warning(std::string("GDAL: ") + message);
  } else if (level == CE_Debug) {
    log::debug(std::string("GDAL: ") + message);
  }
}

}  // namespace

void ensure_gdal() {
  static std::once_flag once;
  std::call_once(once, [] {
    GDALAllRegister();
    CPLSetErrorHandler(route_to_log);
    // GDAL's default block cache is 5 % of RAM; tinct reads each tile about once
    // in row order, so a small cache keeps memory bounded whatever the scene size.
    if (!CPLGetConfigOption("GDAL_CACHEMAX", nullptr)) GDALSetCacheMax64(kBlockCacheBytes);
    // A read that spans several compressed GeoTIFF tiles decodes them on all cores
    // (pair reads whole tile rows); a GDAL_NUM_THREADS set by the user wins.
    if (!CPLGetConfigOption("GDAL_NUM_THREADS", nullptr)) CPLSetConfigOption("GDAL_NUM_THREADS", "ALL_CPUS");
  });
}

std::string last_gdal_message() {
  const char* message = CPLGetLastErrorMsg();
  return message ? message : "";
}

std::string gdal_version() { return GDALVersionInfo("RELEASE_NAME"); }

}  // namespace tinct
