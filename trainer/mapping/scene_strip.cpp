#include "mapping/scene_strip.hpp"

#include <algorithm>
#include <cmath>
#include <cstring>

namespace tinct {

namespace {

// The stored integer a label store keeps for `stored` (lround, clamped to 0..65535): for
// v >= 0, lround(v) is v + 0.5 truncated, exact in double; v <= 0 gives 0. Inlined, unlike
// std::lround, so a strip's planes encode without a call per value.
double stored_integer(float stored) {
  const double clamped = stored > 0 ? std::min(static_cast<double>(stored), 65535.0) : 0.0;
  return static_cast<double>(static_cast<std::int32_t>(clamped + 0.5));
}

}  // namespace

float InputEncoding::encode(std::size_t band, float stored) const {
  const double value = round_to_integers ? stored_integer(stored) : static_cast<double>(stored);
  const auto reflectance = static_cast<float>((value + offset[band]) * scale[band]);
  return (reflectance - mean[band]) * inverse_std[band];
}

void InputEncoding::encode_plane(std::size_t band, const std::uint8_t* valid, std::size_t count, float* plane) const {
  const double add = offset[band], times = scale[band];
  const float centre = mean[band], inverse = inverse_std[band];
  for (std::size_t i = 0; i < count; ++i) {
    const double value = round_to_integers ? stored_integer(plane[i]) : static_cast<double>(plane[i]);
    const float encoded = (static_cast<float>((value + add) * times) - centre) * inverse;
    plane[i] = valid[i] ? encoded : 0.0f;
  }
}

void SceneStrip::read(const Scene& scene, const WindowLayout& layout, const InputEncoding& encoding,
                      int first_window_row, int window_rows) {
  bands_ = static_cast<int>(scene.bands().size());
  width_ = layout.pixel_columns();
  height_ = layout.pixel_rows(window_rows);
  size_ = layout.size;
  stride_ = layout.stride;
  const std::size_t area = static_cast<std::size_t>(width_) * height_;
  values_.resize(area * bands_);
  scene.read(0, layout.first_pixel_row(first_window_row), width_, height_, values_.data());

  std::vector<std::uint8_t> valid(area, 1);
  for (int b = 0; b < bands_; ++b) {
    const float* plane = values_.data() + area * b;
    for (std::size_t i = 0; i < area; ++i) {
      if (!std::isfinite(plane[i])) valid[i] = 0;
    }
  }
  for (int b = 0; b < bands_; ++b) encoding.encode_plane(b, valid.data(), area, values_.data() + area * b);
  valid_sum_.assign(static_cast<std::size_t>(height_ + 1) * (width_ + 1), 0);
  for (int y = 0; y < height_; ++y) {
    std::int64_t row_sum = 0;
    for (int x = 0; x < width_; ++x) {
      row_sum += valid[static_cast<std::size_t>(y) * width_ + x];
      valid_sum_[static_cast<std::size_t>(y + 1) * (width_ + 1) + x + 1] =
          valid_sum_[static_cast<std::size_t>(y) * (width_ + 1) + x + 1] + row_sum;
    }
  }
}

double SceneStrip::valid_fraction(int col, int row) const {
  const int x0 = col * stride_, y0 = row * stride_, x1 = x0 + size_, y1 = y0 + size_;
  const auto at = [&](int y, int x) { return valid_sum_[static_cast<std::size_t>(y) * (width_ + 1) + x]; };
  const std::int64_t count = at(y1, x1) - at(y0, x1) - at(y1, x0) + at(y0, x0);
  return static_cast<double>(count) / (static_cast<double>(size_) * size_);
}

void SceneStrip::copy(int x, int y, int w, int h, float* out) const {
  const std::size_t area = static_cast<std::size_t>(width_) * height_;
  for (int b = 0; b < bands_; ++b) {
    for (int r = 0; r < h; ++r) {
      const float* from = values_.data() + area * b + static_cast<std::size_t>(y + r) * width_ + x;
      std::memcpy(out + (static_cast<std::size_t>(b) * h + r) * w, from, sizeof(float) * w);
    }
  }
}

}  // namespace tinct
