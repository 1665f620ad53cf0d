// A VRT mosaic over rasters of one CRS (GDAL's BuildVRT, the code behind gdalbuildvrt):
// sources referenced relative to the VRT where they lie beside it, nodata kept, later
// sources drawn over earlier ones where they overlap.
#pragma once

#include <filesystem>
#include <vector>

namespace tinct {

// Fails (runtime) naming GDAL's reason, e.g. when the sources' CRS differ.
void build_vrt_mosaic(const std::filesystem::path& vrt, const std::vector<std::filesystem::path>& sources);

}  // namespace tinct
