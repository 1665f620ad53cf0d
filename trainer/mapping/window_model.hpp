// The run's classifier applied to map windows, in two ways that give the same numbers up
// to context at window borders:
// - exact: each window is its own input, as a chip is, read out as the run's head reads a
//   chip (any head.pool: the whole window, or the readout at its centre pixel);
// - dense, for runs whose head pools the whole window (head.pool global): the encoder runs
//   once over a tile holding many overlapping windows and its feature map is
//   average-pooled with the window's size at the stride's step, which is what the head's
//   global pool does inside each window (the stride must be a multiple of the encoder's
//   deepest stride).
// Either way a window yields the features its head reads (used for the area of
// applicability) and its logits. LibTorch stays behind the pimpl.
#pragma once

#include <filesystem>
#include <memory>
#include <string>
#include <vector>

#include "batches/chip_collection.hpp"

namespace tinct {

class WindowModel {
 public:
  // Loads model.pt of a finetune run; inference only, on all threads the runtime has.
  explicit WindowModel(const std::filesystem::path& model_file);
  ~WindowModel();
  WindowModel(const WindowModel&) = delete;
  WindowModel& operator=(const WindowModel&) = delete;

  const std::vector<std::string>& classes() const;
  const BandNormalisation& normalisation() const;
  int chip_size() const;
  int feature_count() const;
  int feature_stride() const;

  // windows: (count, bands, size, size). logits (count, classes), features (count, F).
  void exact(const float* windows, int count, float* logits, float* features);
  // tile: (bands, height, width) holding rows x columns windows at `stride`; outputs per
  // window, row-major.
  void dense(const float* tile, int height, int width, int stride, float* logits, float* features);

 private:
  struct Impl;
  std::unique_ptr<Impl> impl_;
};

}  // namespace tinct
