// Preview PNGs of pretraining: for a fixed set of validation chips, one row per
// chip with the true colour on the left and the predicted colour on the right,
// so a person can see what the model has learnt.
#pragma once

#include <filesystem>

namespace at {
class Tensor;
}

namespace tinct {

// truth_codes: (N, 3, H, W) uint8 cielab8; predicted_scaled: (N, 3, H, W) float
// Lab scaled as L/100, a/128, b/128. Written atomically as a PNG.
void write_colour_preview(const std::filesystem::path& file, const at::Tensor& truth_codes,
                          const at::Tensor& predicted_scaled);

}  // namespace tinct
