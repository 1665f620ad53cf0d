// GDAL set-up done once per process: drivers registered, and GDAL's own error
// and warning messages routed to tinct's log instead of raw stderr.
#pragma once

#include <string>

namespace tinct {

void ensure_gdal();
// The most recent GDAL error message, for inclusion in our own errors.
std::string last_gdal_message();
std::string gdal_version();

}  // namespace tinct
