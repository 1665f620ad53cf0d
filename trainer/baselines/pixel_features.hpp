// What the pixel baselines learn from: a labelled chip's input bands at its label pixel
// (the chip centre (size/2, size/2), where tinct label puts the label) and their mean
// over the 3 x 3 pixels around it (valid pixels only), in reflectance (the store's scale
// and offset applied). No normalisation here: a classifier that needs it standardises
// with its own training rows.
#pragma once

#include <string>
#include <vector>

#include "batches/chip_collection.hpp"

namespace tinct {

enum class FeatureSet { pixel, pixel3x3, pixel_and_3x3 };

// Names in configs: "pixel", "pixel3x3", "pixel_and_3x3"; `where` starts the error.
FeatureSet feature_set_from_name(const std::string& name, const std::string& where);
std::string to_string(FeatureSet set);

// One row per chip, one column per feature: the bands in store order for `pixel`, then
// the same bands' 3 x 3 means for `pixel3x3`.
struct FeatureTable {
  std::vector<std::string> names;  // (F): band names, "NAME_3x3" for the means
  std::vector<float> values;       // (N, F) row-major
  int columns() const { return static_cast<int>(names.size()); }
  int rows() const { return names.empty() ? 0 : static_cast<int>(values.size() / names.size()); }
  const float* row(int i) const { return values.data() + static_cast<std::size_t>(i) * names.size(); }
};

// Fails (runtime), naming the store and chip, when a chip's label pixel is invalid (a
// store built with chips.centre_valid: false); its neighbours may be invalid, they are
// left out of the mean (and out of the window at a chip's edge).
FeatureTable pixel_features(const ChipCollection& chips, const std::vector<ChipRef>& refs, FeatureSet set);

}  // namespace tinct
