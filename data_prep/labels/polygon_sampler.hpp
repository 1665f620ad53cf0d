// Polygon labels become point labels: `count` seeded points inside each polygon
// (uniform over its bounding box in the source CRS, kept when OGR's Within says
// the point is inside), each then matched like a point. Samples keep the
// polygon's id and group, so a fold never splits one polygon. Samples may share
// a pixel when the polygon is small; they are not spaced apart.
#pragma once

#include <cstdint>

#include "labels/label_reader.hpp"

namespace tinct {

// Replaces every polygon of `set` by up to `count` points (fewer, with a warning,
// when rejection sampling finds fewer); a polygon with none found is dropped.
// The points of polygon number k depend only on `seed` and k.
void sample_polygons(LabelSet& set, int count, std::uint64_t seed);

}  // namespace tinct
