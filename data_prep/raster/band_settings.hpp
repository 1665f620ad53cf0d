// Config pieces that every command cutting chips from scenes shares: checking
// that named bands exist in the sensor profile (with a suggestion), and the
// `grid:` section (target resolution and resampling methods).
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "raster/resampling.hpp"
#include "raster/sensor_profile.hpp"
#include "util/config_node.hpp"

namespace tinct {

// Fails at `key` of `node` for the first name the profile does not list.
void require_profile_bands(const ConfigNode& node, const std::string& key, const std::vector<std::string>& names,
                           const SensorProfile& profile);

// The `inputs:` list: at least one band, each in the profile, none twice.
std::vector<std::string> read_input_bands(const ConfigNode& root, const SensorProfile& profile);

// chips.size: pixels, default 64, a multiple of kChipSizeMultiple (16) so every
// encoder can take the chips; the message says which sizes would do.
int read_chip_size(const ConfigNode& chips);

// grid: {resolution, refine, coarsen}; calls finish(). The resolution defaults to
// `scenes_pixel` (the pixel size all band files share, so nothing is resampled that need
// not be), else to the profile's reference resolution.
AlignSettings read_grid_settings(const ConfigNode& node, const SensorProfile& profile,
                                 std::optional<double> scenes_pixel, double& resolution);

}  // namespace tinct
