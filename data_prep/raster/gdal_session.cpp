#include "raster/gdal_session.hpp"

#include <cpl_conv.h>
#include <cpl_error.h>
#include <gdal.h>

#include <cstdlib>
#include <mutex>
#include <string>

#include "util/log.hpp"

namespace tinct {
namespace {

constexpr GIntBig kBlockCacheBytes = 64LL * 1024 * 1024;

void route_to_log(CPLErr level, CPLErrorNum, const char* message) {
  // Failures are re-raised as tinct errors with context by the caller; only
  // warnings are worth showing on their own.
  if (level == CE_Fatal) {
    // GDAL aborts the process after a fatal error (its failed allocations are fatal):
    // say what happened in tinct's words and end with exit 1 instead of an abort.
    const std::string text = message ? message : "";
    log::error(text.find("Out of memory") != std::string::npos
                   ? "out of memory: GDAL could not allocate what it needed (" + text +
                         "); run where more memory is free (ulimit -v also limits it)"
                   : "GDAL failed fatally: " + text);
    std::_Exit(1);
  }
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
    CPLSetErrorHandler(route_to_log);  // first: registering drivers allocates too
    GDALAllRegister();
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

// Measured with GDAL 3.6 on a 4096 x 4096, 12-band DEFLATE scene of 256 px tiles read in
// map strips 304 rows high every 256 rows: with the multi-threaded decoder reading took 6.1
// to 6.5 CPU s (tile rows two strips share decoded twice; a block cache of 96 MB instead
// of 64 avoided that, at 50 MB more peak memory), on one thread 4.1 to 4.5 s.
void decode_tiles_on_one_thread() {
  ensure_gdal();
  if (!std::getenv("GDAL_NUM_THREADS")) CPLSetConfigOption("GDAL_NUM_THREADS", "1");
}

}  // namespace tinct
