// `tinct map --points FILE`: the map's values at listed places, from the window centred on
// each point (its pixel at (size/2, size/2), as label chips are cut), in the first scene
// (config order) whose grid holds that window with enough valid pixels. FILE is a CSV with
// x,y columns (in the first scene's CRS) or lon,lat columns (WGS 84), or any OGR point
// layer (its own CRS). Writes points.csv and points.gpkg (in the points' CRS) with the
// scene, valid fraction, class, probabilities, uncertainty and area of applicability, each
// point under its id: the CSV's id column or the layer's id field (any case), else the row
// number or the feature id.
#pragma once

#include <filesystem>

#include "mapping/scene_mapper.hpp"

namespace tinct {

void predict_points(const std::filesystem::path& points, const MapContext& context,
                    const std::filesystem::path& folder);

}  // namespace tinct
