#include "models/ab_bins.hpp"

#include "util/error.hpp"

namespace tinct {

std::vector<std::pair<float, float>> ab_bin_centres(int per_axis) {
  if (per_axis < 1) fail_usage("ab bins: per_axis must be >= 1, got " + std::to_string(per_axis));
  const double step = 2.0 * kAbBinRange / per_axis;
  std::vector<std::pair<float, float>> centres;
  centres.reserve(static_cast<std::size_t>(per_axis) * per_axis);
  for (int ia = 0; ia < per_axis; ++ia) {
    for (int ib = 0; ib < per_axis; ++ib) {
      centres.emplace_back(static_cast<float>(-kAbBinRange + (ia + 0.5) * step),
                           static_cast<float>(-kAbBinRange + (ib + 0.5) * step));
    }
  }
  return centres;
}

}  // namespace tinct
