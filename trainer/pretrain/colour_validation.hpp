// Validation of pretraining on chips of held-out spatial blocks: the loss, the
// mean CIE76 colour difference of the predictions, and the same difference for
// the baseline that always predicts the training set's mean colour.
#pragma once

#include <torch/torch.h>

#include <vector>

#include "batches/chip_collection.hpp"
#include "pretrain/colour_objective.hpp"

namespace tinct {

struct ColourValidation {
  double loss = 0;
  double delta_e = 0;           // mean over valid pixels
  double baseline_delta_e = 0;  // predict-the-mean-colour baseline
  double pixels = 0;            // valid pixels the means are over
};

// `model` maps (B, C, H, W) inputs to the objective's outputs. Batches of
// `batch_size`, no augmentation, in inference mode; pixel-weighted means.
ColourValidation validate_colour(torch::nn::Module& model,
                                 const std::function<torch::Tensor(const torch::Tensor&)>& forward,
                                 const ColourObjective& objective, const ChipCollection& collection,
                                 const std::vector<ChipRef>& chips, int batch_size,
                                 const torch::Tensor& mean_colour);

}  // namespace tinct
