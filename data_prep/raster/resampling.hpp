// Resampling methods for aligning bands onto a scene's grid, and the rule that
// picks one: averaging when a band is coarsened, interpolation when refined.
#pragma once

#include <string>

namespace tinct {

enum class Resampling { nearest, bilinear, cubic, average };

std::string to_string(Resampling method);  // GDAL's names: near, bilinear, cubic, average
Resampling resampling_from_string(const std::string& name);  // inverse of to_string

struct AlignSettings {
  Resampling refine = Resampling::bilinear;  // source pixels larger than the target's
  Resampling coarsen = Resampling::average;  // source pixels smaller than the target's
};

Resampling choose_resampling(double source_pixel, double target_pixel, const AlignSettings& settings);

}  // namespace tinct
