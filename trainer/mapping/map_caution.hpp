// The sentence every map carries, in its GeoTIFF metadata, its quicklook's footer and
// its point files.
#pragma once

namespace tinct {

inline constexpr const char* kMapCaution =
    "Model output to guide surveillance planning only: it defers to field confirmation and to the public-health "
    "authority's protocols. Cells outside the area of applicability and cells without data are unknown, not absent.";

}  // namespace tinct
