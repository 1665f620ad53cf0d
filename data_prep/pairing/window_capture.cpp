#include "pairing/window_capture.hpp"

#include <algorithm>

namespace tinct {

WindowCapture::WindowCapture(std::vector<Window> windows, int size, std::vector<std::size_t> planes)
    : size_(size), planes_(std::move(planes)) {
  const std::size_t n = static_cast<std::size_t>(size) * size;
  for (const Window& window : windows) kept_.push_back({window, std::vector<float>(planes_.size() * n),
                                                       std::vector<bool>(static_cast<std::size_t>(size))});
}

void WindowCapture::add_strip(const float* strip, int width, int top, int rows) {
  const std::size_t plane = static_cast<std::size_t>(width) * rows, n = static_cast<std::size_t>(size_) * size_;
  for (Kept& kept : kept_) {
    const int from = std::max(top, kept.window.row), to = std::min(top + rows, kept.window.row + size_);
    for (int r = from; r < to; ++r) {
      for (std::size_t k = 0; k < planes_.size(); ++k) {
        const float* source = strip + planes_[k] * plane + static_cast<std::size_t>(r - top) * width + kept.window.col;
        std::copy(source, source + size_, kept.values.data() + k * n + static_cast<std::size_t>(r - kept.window.row) * size_);
      }
      kept.rows_seen[r - kept.window.row] = true;
    }
  }
}

bool WindowCapture::read(int col, int row, int width, int height, const std::vector<std::size_t>& which,
                         float* out) const {
  if (width != size_ || height != size_) return false;
  const auto found = std::find_if(kept_.begin(), kept_.end(),
                                  [&](const Kept& k) { return k.window.col == col && k.window.row == row; });
  if (found == kept_.end() || std::find(found->rows_seen.begin(), found->rows_seen.end(), false) != found->rows_seen.end()) {
    return false;
  }
  const std::size_t n = static_cast<std::size_t>(size_) * size_;
  for (std::size_t k = 0; k < which.size(); ++k) {
    const auto position = std::find(planes_.begin(), planes_.end(), which[k]);
    if (position == planes_.end()) return false;
    const float* source = found->values.data() + static_cast<std::size_t>(position - planes_.begin()) * n;
    std::copy(source, source + n, out + k * n);
  }
  return true;
}

}  // namespace tinct
