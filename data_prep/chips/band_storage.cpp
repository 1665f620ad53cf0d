#include "chips/band_storage.hpp"

#include <algorithm>
#include <cmath>

#include "raster/raster.hpp"

namespace tinct {

namespace {

// lround then clamp to 0..65535, zero where invalid, in float so that four values go per
// SSE register: for 0 <= v <= 65535, lround(v) is its integer part t plus one when
// v - t >= 0.5 (t and v - t are exact in float, where v + 0.5 need not be); NaN and
// v <= 0 give 0. Branch-free, so that it vectorises.
void round_plane(const float* values, const std::uint8_t* valid, std::size_t n, std::uint16_t* out) {
  for (std::size_t i = 0; i < n; ++i) {
    const float v = values[i];
    const float positive = v > 0.0f ? v : 0.0f;  // NaN -> 0
    const float clamped = positive < 65535.0f ? positive : 65535.0f;
    const auto whole = static_cast<std::int32_t>(clamped);
    const auto rounded = whole + static_cast<std::int32_t>(clamped - static_cast<float>(whole) >= 0.5f);
    out[i] = static_cast<std::uint16_t>(rounded & -static_cast<std::int32_t>(valid[i] != 0));
  }
}

}  // namespace

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
    for (std::size_t start = 0; start < values.size(); start += n) {
      round_plane(values.data() + start, valid.data(), n, u16.data() + start);
    }
  } else {
    f32.resize(values.size());
    for (std::size_t i = 0; i < values.size(); ++i) f32[i] = valid[i % n] ? values[i] : 0.0f;
  }
}

}  // namespace tinct
