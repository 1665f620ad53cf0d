// Sentinel-2's processing baseline, read from product metadata: from baseline 04.00
// (25 January 2022) L2A values carry an offset (BOA_ADD_OFFSET -1000), so the same
// profile reads older and newer products differently. Profiles with a
// baseline_04_offset take the baseline from each scene's files where they carry it
// (PROCESSING_BASELINE, or a BOA_ADD_OFFSET item on the dataset or the band), and
// from the profile's baseline_04 key where they do not.
#pragma once

#include <optional>
#include <string>
#include <vector>

#include "raster/raster.hpp"
#include "raster/scene_spec.hpp"
#include "raster/sensor_profile.hpp"
#include "util/config_node.hpp"

namespace tinct {

struct BaselineEvidence {
  std::optional<bool> baseline_04;  // nullopt: the metadata says nothing
  std::string item;                 // e.g. "PROCESSING_BASELINE=04.00", for messages
};

// What `raster` (and its band `band`) says. A BOA_ADD_OFFSET of neither 0 nor the
// profile's baseline_04_offset is an error naming the file.
BaselineEvidence baseline_from_metadata(const Raster& raster, int band, const SensorProfile& profile);

// Sets profile.baseline_04 from the scenes' metadata, once for all of them (a store
// has one offset per band): scenes that carry the metadata must agree with each other
// and with baseline_04 where the config sets it; errors point at `items` (the scenes'
// config entries) and say what to do. Logs what was found. Profiles without a
// baseline_04_offset are left alone.
void settle_processing_baseline(SensorProfile& profile, const std::vector<SceneSpec>& scenes,
                                const std::vector<ConfigNode>& items);

}  // namespace tinct
