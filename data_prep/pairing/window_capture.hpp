// The pixels of a few fixed square windows, copied out of the strips of a single pass
// as it reads them, so that a later step (the co-registration check) finds them there
// instead of decoding the scene again. Only the planes asked for are kept.
#pragma once

#include <cstddef>
#include <vector>

namespace tinct {

class WindowCapture {
 public:
  struct Window {
    int col, row;
  };
  // `planes`: which planes of a strip to keep (indices into the strip's planes).
  WindowCapture(std::vector<Window> windows, int size, std::vector<std::size_t> planes);

  // strip: planes of `width` x `rows` values, band after band, starting at row `top`.
  void add_strip(const float* strip, int width, int top, int rows);
  // Copies the kept planes `which` (each one of the constructor's `planes`), in that
  // order, of the window at (col, row) sized width x height into out. False unless
  // that is a captured window and every one of its rows has gone by.
  bool read(int col, int row, int width, int height, const std::vector<std::size_t>& which, float* out) const;

 private:
  struct Kept {
    Window window;
    std::vector<float> values;  // planes_.size() planes of size_ x size_
    std::vector<bool> rows_seen;
  };
  std::vector<Kept> kept_;
  int size_;
  std::vector<std::size_t> planes_;
};

}  // namespace tinct
