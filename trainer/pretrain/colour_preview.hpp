// Preview PNGs of pretraining: a header with the step and the validation colour
// difference, then for a fixed set of validation chips one row per chip with the
// true colour on the left and the predicted colour on the right (columns labelled),
// tiles enlarged to a size one can see, so a person can judge what the model learnt.
#pragma once

#include <cstdint>
#include <filesystem>
#include <vector>

#include "batches/chip_collection.hpp"

namespace at {
class Tensor;
}

namespace tinct {

struct PreviewCaption {
  std::int64_t step = 0;
  double delta_e = 0;           // mean CIE76 delta E on the validation chips
  double baseline_delta_e = 0;  // of predicting the mean training colour
};

// `count` chips of `candidates` (validation chips) that differ most in colour:
// farthest-point sampling over each chip's mean L*, a*, b* and colour spread (std
// of L*, a*, b*), from the chip of median spread. Flat dark water and busy fields
// both appear, each once, not whichever chips come first. Deterministic.
std::vector<ChipRef> preview_chips(const ChipCollection& chips, const std::vector<ChipRef>& candidates, int count);

// truth_codes: (N, 3, H, W) uint8 cielab8; predicted_scaled: (N, 3, H, W) float
// Lab scaled as L/100, a/128, b/128. Written atomically as a PNG.
void write_colour_preview(const std::filesystem::path& file, const at::Tensor& truth_codes,
                          const at::Tensor& predicted_scaled, const PreviewCaption& caption);

}  // namespace tinct
