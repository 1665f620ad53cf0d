#include "baselines/pixel_features.hpp"

#include <algorithm>

#include "util/error.hpp"

namespace tinct {
namespace {

// Reflectance of one stored value, exactly as StoreReader::read_reflectance computes it.
float reflectance_at(const StoreReader& store, std::int64_t chip, int band, std::size_t pixel) {
  const StoreBand& info = store.manifest().bands[static_cast<std::size_t>(band)];
  const std::size_t area = static_cast<std::size_t>(store.chip_size()) * store.chip_size();
  const std::size_t at = static_cast<std::size_t>(band) * area + pixel;
  const double stored = info.storage == StorageType::uint16 ? store.bands_u16(chip)[at] : store.bands_f32(chip)[at];
  return static_cast<float>((stored + info.offset) * info.scale);
}

void check_label_pixel(const StoreReader& store, std::int64_t chip) {
  const int size = store.chip_size(), centre = size / 2;
  if (store.valid(chip)[static_cast<std::size_t>(centre) * size + centre] == 1) return;
  const ChipRecord record = store.record(chip);
  fail_runtime("store " + store.path().string() + ": chip " + std::to_string(chip) + " (label source id \"" +
               record.source_id + "\") has no valid value at its label pixel (" + std::to_string(centre) + ", " +
               std::to_string(centre) + "), so a pixel baseline cannot use it; rebuild the label store with "
               "chips.centre_valid: true (the default), which drops such labels");
}

// Mean reflectance of `band` over the valid pixels of the 3 x 3 window around the centre
// that lie inside the chip (the centre itself is valid, so the mean is defined).
float window_mean(const StoreReader& store, std::int64_t chip, int band) {
  const int size = store.chip_size(), centre = size / 2;
  const std::uint8_t* valid = store.valid(chip);
  double sum = 0;
  int count = 0;
  for (int row = std::max(0, centre - 1); row <= std::min(size - 1, centre + 1); ++row) {
    for (int col = std::max(0, centre - 1); col <= std::min(size - 1, centre + 1); ++col) {
      const std::size_t pixel = static_cast<std::size_t>(row) * size + col;
      if (valid[pixel] != 1) continue;
      sum += reflectance_at(store, chip, band, pixel);
      ++count;
    }
  }
  return static_cast<float>(sum / count);
}

}  // namespace

FeatureSet feature_set_from_name(const std::string& name, const std::string& where) {
  if (name == "pixel") return FeatureSet::pixel;
  if (name == "pixel3x3") return FeatureSet::pixel3x3;
  if (name == "pixel_and_3x3") return FeatureSet::pixel_and_3x3;
  fail_usage(where + ": unknown feature set \"" + name + "\"; use pixel, pixel3x3 or pixel_and_3x3");
}

std::string to_string(FeatureSet set) {
  switch (set) {
    case FeatureSet::pixel: return "pixel";
    case FeatureSet::pixel3x3: return "pixel3x3";
    case FeatureSet::pixel_and_3x3: return "pixel_and_3x3";
  }
  return "?";
}

FeatureTable pixel_features(const ChipCollection& chips, const std::vector<ChipRef>& refs, FeatureSet set) {
  const bool pixel = set != FeatureSet::pixel3x3, mean = set != FeatureSet::pixel;
  const int bands = chips.band_count();
  FeatureTable table;
  if (pixel) table.names = chips.band_names();
  if (mean) {
    for (const std::string& band : chips.band_names()) table.names.push_back(band + "_3x3");
  }
  table.values.reserve(refs.size() * table.names.size());
  for (const ChipRef& ref : refs) {
    const StoreReader& store = chips.store(ref.store);
    check_label_pixel(store, ref.chip);
    const int centre = store.chip_size() / 2;
    const std::size_t centre_pixel = static_cast<std::size_t>(centre) * store.chip_size() + centre;
    if (pixel) {
      for (int b = 0; b < bands; ++b) table.values.push_back(reflectance_at(store, ref.chip, b, centre_pixel));
    }
    if (mean) {
      for (int b = 0; b < bands; ++b) table.values.push_back(window_mean(store, ref.chip, b));
    }
  }
  return table;
}

}  // namespace tinct
