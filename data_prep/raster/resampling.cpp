#include "raster/resampling.hpp"

#include "util/error.hpp"

namespace tinct {

std::string to_string(Resampling method) {
  switch (method) {
    case Resampling::nearest: return "near";
    case Resampling::bilinear: return "bilinear";
    case Resampling::cubic: return "cubic";
    case Resampling::average: return "average";
  }
  return "near";
}

Resampling resampling_from_string(const std::string& name) {
  for (Resampling method : {Resampling::nearest, Resampling::bilinear, Resampling::cubic,
                            Resampling::average}) {
    if (to_string(method) == name) return method;
  }
  fail_usage("unknown resampling \"" + name + "\"; use near, bilinear, cubic or average");
}

Resampling choose_resampling(double source_pixel, double target_pixel, const AlignSettings& settings) {
  return source_pixel > target_pixel ? settings.refine : settings.coarsen;
}

}  // namespace tinct
