// Reading a feature map out at the label pixel of a chip, (H/2, W/2) for chips of H x W:
// the map as bilinear upsampling to chip resolution would give it there, the cells around
// the chip centre, or a 3 x 3 mean. Each keeps only what lies near the label pixel, so
// features far from the label cannot reach the head through these readouts.
#pragma once

#include <torch/torch.h>

#include <cstdint>

namespace tinct {

// (B, C, h, w) map of a (H, W) chip -> (B, C): the value at pixel (H/2, W/2) of
// interpolate(map, {H, W}, bilinear, align_corners false), from its 2 x 2 neighbouring cells.
torch::Tensor upsampled_at_label_pixel(const torch::Tensor& map, std::int64_t height, std::int64_t width);

// (B, C, h, w) -> (B, C): the mean of the cells that touch the chip centre (rows and columns
// ceil(h/2) - 1 to floor(h/2): one cell when h is odd, two when even).
torch::Tensor centre_cells(const torch::Tensor& map);

// (B, C, H, W) at chip resolution -> (B, C): the mean of the 3 x 3 pixels around (H/2, W/2),
// cut at the chip's edge.
torch::Tensor mean_3x3_at_label_pixel(const torch::Tensor& map);

}  // namespace tinct
