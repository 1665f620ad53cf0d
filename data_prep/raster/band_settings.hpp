// Config pieces that every command cutting chips from scenes shares: checking
// that named bands exist in the sensor profile (with a suggestion), and the
// `grid:` section (target resolution and resampling methods).
#pragma once

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

// grid: {resolution (default: the profile's reference), refine, coarsen}; calls finish().
AlignSettings read_grid_settings(const ConfigNode& node, const SensorProfile& profile, double& resolution);

}  // namespace tinct
