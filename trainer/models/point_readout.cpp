#include "models/point_readout.hpp"

#include <algorithm>

namespace tinct {
namespace {

struct Taps {
  std::int64_t low = 0, high = 0;
  double weight_high = 0;  // weight of `high`; `low` gets 1 - weight_high
};

// PyTorch's source index for bilinear, align_corners false: (dst + 0.5) * in / out - 0.5,
// clamped at 0; the upper tap is clamped at the last cell.
Taps taps(std::int64_t destination, std::int64_t in_size, std::int64_t out_size) {
  const double scale = static_cast<double>(in_size) / static_cast<double>(out_size);
  const double source = std::max(0.0, (static_cast<double>(destination) + 0.5) * scale - 0.5);
  Taps t;
  t.low = std::min(static_cast<std::int64_t>(source), in_size - 1);
  t.high = std::min(t.low + 1, in_size - 1);
  t.weight_high = source - static_cast<double>(t.low);
  return t;
}

}  // namespace

torch::Tensor upsampled_at_label_pixel(const torch::Tensor& map, std::int64_t height, std::int64_t width) {
  const Taps row = taps(height / 2, map.size(2), height);
  const Taps col = taps(width / 2, map.size(3), width);
  const auto at = [&](std::int64_t r, std::int64_t c) { return map.select(2, r).select(2, c); };  // (B, C)
  const torch::Tensor top = at(row.low, col.low) * (1 - col.weight_high) + at(row.low, col.high) * col.weight_high;
  const torch::Tensor bottom =
      at(row.high, col.low) * (1 - col.weight_high) + at(row.high, col.high) * col.weight_high;
  return top * (1 - row.weight_high) + bottom * row.weight_high;
}

torch::Tensor centre_cells(const torch::Tensor& map) {
  const std::int64_t h = map.size(2), w = map.size(3);
  const std::int64_t row0 = (h + 1) / 2 - 1, rows = h / 2 - row0 + 1;
  const std::int64_t col0 = (w + 1) / 2 - 1, cols = w / 2 - col0 + 1;
  return map.narrow(2, row0, rows).narrow(3, col0, cols).mean({2, 3});
}

torch::Tensor mean_3x3_at_label_pixel(const torch::Tensor& map) {
  const std::int64_t h = map.size(2), w = map.size(3);
  const std::int64_t row0 = std::max<std::int64_t>(0, h / 2 - 1), row1 = std::min(h - 1, h / 2 + 1);
  const std::int64_t col0 = std::max<std::int64_t>(0, w / 2 - 1), col1 = std::min(w - 1, w / 2 + 1);
  return map.narrow(2, row0, row1 - row0 + 1).narrow(3, col0, col1 - col0 + 1).mean({2, 3});
}

}  // namespace tinct
