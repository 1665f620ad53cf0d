// How a store keeps its input bands: uint16 when every input band is stored as 8-
// or 16-bit unsigned integers (resampled values are rounded to the nearest stored
// unit), float32 otherwise; scale and offset from the sensor profile; invalid
// pixels written as 0 (valid.bin says which they are).
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "chips/store_manifest.hpp"
#include "raster/scene_spec.hpp"
#include "raster/sensor_profile.hpp"

namespace tinct {

StorageType storage_for_inputs(const std::vector<const SceneSpec*>& scenes, const std::vector<std::string>& inputs);

std::vector<StoreBand> store_bands(const std::vector<std::string>& inputs, StorageType storage,
                                   const SensorProfile& profile);

// The layout of a store of `kind` holding `inputs` (colour only for pair stores).
StoreLayout chip_store_layout(StoreKind kind, int chip_size, const std::vector<std::string>& inputs,
                              StorageType storage, const SensorProfile& profile);

// values: planes of n pixels (NaN or anything where valid[i] is 0); fills the
// buffer of the storage type.
void to_stored_values(const std::vector<float>& values, const std::vector<std::uint8_t>& valid, StorageType storage,
                      std::vector<std::uint16_t>& u16, std::vector<float>& f32);

}  // namespace tinct
