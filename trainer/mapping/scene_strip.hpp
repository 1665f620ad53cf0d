// A strip of a scene holding whole rows of map windows, turned into what the model
// takes: stored values made reflectance the way the run's label store made them (rounded
// to the stored integers when it kept integers, then scale and offset), normalised with
// the run's statistics, 0 where a pixel is invalid (any band without data, or masked),
// exactly as training chips are fed. Memory: bands x strip pixels, never the scene.
#pragma once

#include <cstdint>
#include <vector>

#include "mapping/window_layout.hpp"
#include "raster/scene.hpp"

namespace tinct {

struct InputEncoding {
  std::vector<double> scale, offset;  // per band
  bool round_to_integers = true;
  std::vector<float> mean, inverse_std;  // per band, as the batch assembler uses them

  float encode(std::size_t band, float stored) const;
  // encode() over a band's plane in place; 0 where `valid` is 0.
  void encode_plane(std::size_t band, const std::uint8_t* valid, std::size_t count, float* plane) const;
};

class SceneStrip {
 public:
  // Reads the pixels of window rows [first_window_row, first_window_row + window_rows).
  void read(const Scene& scene, const WindowLayout& layout, const InputEncoding& encoding, int first_window_row,
            int window_rows);

  int width() const { return width_; }
  int height() const { return height_; }
  int bands() const { return bands_; }
  // Share of valid pixels in window (col, row), row counted within the strip.
  double valid_fraction(int col, int row) const;
  // bands x h x w model inputs of the pixel rectangle at (x, y) of the strip.
  void copy(int x, int y, int w, int h, float* out) const;

 private:
  int width_ = 0, height_ = 0, bands_ = 0;
  int size_ = 0, stride_ = 0;
  std::vector<float> values_;              // bands x height x width
  std::vector<std::int64_t> valid_sum_;    // (height + 1) x (width + 1) summed-area table
};

}  // namespace tinct
