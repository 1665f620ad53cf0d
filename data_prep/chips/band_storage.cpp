#include "chips/band_storage.hpp"

#include <algorithm>
#include <cmath>

#include "raster/raster.hpp"

namespace tinct {

StorageType storage_for_inputs(const std::vector<const SceneSpec*>& scenes, const std::vector<std::string>& inputs) {
  for (const SceneSpec* scene : scenes) {
    for (const auto& name : inputs) {
      const SceneBand* band = scene->band(name);
      const std::string type = Raster::open(band->file).band(band->index).data_type;
      if (type != "Byte" && type != "UInt16") return StorageType::float32;
    }
  }
  return StorageType::uint16;
}

std::vector<StoreBand> store_bands(const std::vector<std::string>& inputs, StorageType storage,
                                   const SensorProfile& profile) {
  std::vector<StoreBand> bands;
  for (const auto& name : inputs) bands.push_back({name, storage, profile.scale, profile.effective_offset()});
  return bands;
}

StoreLayout chip_store_layout(StoreKind kind, int chip_size, const std::vector<std::string>& inputs,
                              StorageType storage, const SensorProfile& profile) {
  StoreLayout layout;
  layout.kind = kind;
  layout.chip_size = chip_size;
  layout.has_colour = kind == StoreKind::pairs;
  layout.storage = storage;
  layout.bands = store_bands(inputs, storage, profile);
  return layout;
}

void to_stored_values(const std::vector<float>& values, const std::vector<std::uint8_t>& valid, StorageType storage,
                      std::vector<std::uint16_t>& u16, std::vector<float>& f32) {
  const std::size_t n = valid.size();
  if (storage == StorageType::uint16) {
    u16.resize(values.size());
    // lround then clamp to 0..65535, per plane without a division per value: for
    // v >= 0, lround(v) is v + 0.5 truncated, exact in double; NaN and v <= 0 give 0.
    for (std::size_t start = 0; start < values.size(); start += n) {
      for (std::size_t i = 0; i < n; ++i) {
        const float v = values[start + i];
        const double clamped = v > 0 ? std::min(static_cast<double>(v), 65535.0) : 0.0;  // NaN -> 0
        u16[start + i] = valid[i] ? static_cast<std::uint16_t>(static_cast<std::int32_t>(clamped + 0.5)) : 0;
      }
    }
  } else {
    f32.resize(values.size());
    for (std::size_t i = 0; i < values.size(); ++i) f32[i] = valid[i % n] ? values[i] : 0.0f;
  }
}

}  // namespace tinct
