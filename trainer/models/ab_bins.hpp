// The quantised ab plane of the ab_bins decoder output: a regular per_axis x per_axis grid
// over a, b in [-110, 110]. Bin k = ia * per_axis + ib (a slowest). No LibTorch here.
#pragma once

#include <utility>
#include <vector>

namespace tinct {

constexpr float kAbBinRange = 110.0f;  // the grid spans [-kAbBinRange, kAbBinRange] on a and b

// (a, b) at the centre of each bin, in bin order; per_axis >= 1.
std::vector<std::pair<float, float>> ab_bin_centres(int per_axis);

}  // namespace tinct
