// GDAL set-up done once per process: drivers registered, and GDAL's own error
// and warning messages routed to tinct's log instead of raw stderr.
#pragma once

#include <string>

namespace tinct {

void ensure_gdal();
// The most recent GDAL error message, for inclusion in our own errors.
std::string last_gdal_message();
std::string gdal_version();
// For reads that overlap the ones before (map strips share the rows of a window less a
// stride): compressed tiles decoded on one thread, through GDAL's block cache. A
// GDAL_NUM_THREADS set by the user wins.
void decode_tiles_on_one_thread();

}  // namespace tinct
