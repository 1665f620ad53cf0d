// One batch of chips as tensors, and how it is assembled from a collection:
// reflectance normalised per band with the stores' statistics (invalid pixels set
// to 0), colour codes and validity, each chip under its own symmetry.
#pragma once

#include <torch/torch.h>

#include <cstdint>
#include <vector>

#include "batches/chip_collection.hpp"

namespace tinct {

struct Batch {
  std::int64_t step = 0;
  torch::Tensor bands;   // (B, C, H, W) float32, normalised
  torch::Tensor colour;  // (B, 3, H, W) uint8 cielab8 codes (undefined for stores without colour)
  torch::Tensor valid;   // (B, H, W) bool
  torch::Tensor labels;  // (B) int64 class index (label stores only)
  std::vector<ChipRef> chips;
};

// symmetries: one per chip (0 = as stored).
Batch assemble_batch(const ChipCollection& collection, const std::vector<ChipRef>& chips,
                     const std::vector<int>& symmetries);

}  // namespace tinct
