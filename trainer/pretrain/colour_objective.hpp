// What pretraining optimises and how its predictions read as colour: the
// configured loss on a batch's Lab targets over valid pixels and, for the ab-bin
// classification, the rebalancing weights fitted to the training chips' colours.
#pragma once

#include <torch/torch.h>

#include <vector>

#include "batches/batch.hpp"
#include "pretrain/colour_loss.hpp"

namespace tinct {

class ColourObjective {
 public:
  // For ab_bins, counts the ab bins of up to `sample` training chips for rebalancing.
  ColourObjective(const ColourLossSettings& settings, const ChipCollection& collection,
                  const std::vector<ChipRef>& training, int sample = 512);

  torch::Tensor loss(const torch::Tensor& prediction, const Batch& batch) const;
  // Model output -> (B, 3, H, W) scaled Lab (L/100, a/128, b/128).
  torch::Tensor predicted_lab(const torch::Tensor& prediction) const;

 private:
  ColourLossSettings settings_;
  AbBinning binning_;
  torch::Tensor bin_weights_;
};

// Mean scaled Lab of the valid pixels of up to `sample` chips: the colour the
// predict-the-mean baseline always answers. (3) float.
torch::Tensor mean_training_colour(const ChipCollection& collection, const std::vector<ChipRef>& training,
                                   int sample = 512);

}  // namespace tinct
