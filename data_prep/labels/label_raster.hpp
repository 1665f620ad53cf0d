// Point labels from a label raster (a class value per pixel, e.g. a rasterised
// habitat survey): the raster is tiled into windows of one chip's footprint
// (chip size x grid resolution, in label-raster pixels; full windows only), and
// each window with a class becomes one point label at its centre pixel, whose
// class is the value there (rule centre) or the most frequent value in the
// window when it covers at least min_share of it (rule majority; ties: the
// smaller value). Windows without any class value (nodata) are not labels.
// The raster must be north-up in a projected CRS, so its pixels compare to the grid's.
#pragma once

#include "labels/label_config.hpp"
#include "labels/label_reader.hpp"

namespace tinct {

LabelSet read_label_raster(const LabelSourceSettings& settings, int chip_size, double resolution);

// The class list a label raster implies when labels.classes is not given:
// raster_classes' names in order, or empty (the sorted distinct values).
std::vector<std::string> raster_class_names(const LabelSourceSettings& settings);

}  // namespace tinct
