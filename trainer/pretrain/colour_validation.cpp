#include "pretrain/colour_validation.hpp"

#include <algorithm>

#include "batches/batch.hpp"

namespace tinct {

ColourValidation validate_colour(torch::nn::Module& model,
                                 const std::function<torch::Tensor(const torch::Tensor&)>& forward,
                                 const ColourObjective& objective, const ChipCollection& collection,
                                 const std::vector<ChipRef>& chips, int batch_size,
                                 const torch::Tensor& mean_colour) {
  torch::InferenceMode inference;
  model.eval();
  double loss_sum = 0, delta_sum = 0, baseline_sum = 0, pixels = 0;
  for (std::size_t start = 0; start < chips.size(); start += static_cast<std::size_t>(batch_size)) {
    const std::vector<ChipRef> part(chips.begin() + start,
                                    chips.begin() + std::min(chips.size(), start + batch_size));
    const Batch batch = assemble_batch(collection, part, std::vector<int>(part.size(), 0));
    const double valid = batch.valid.sum().item<double>();
    if (valid == 0) continue;
    const torch::Tensor prediction = forward(batch.bands);
    const torch::Tensor target = colour_targets(batch.colour);  // (B, 3, H, W) scaled
    const torch::Tensor baseline = mean_colour.view({1, 3, 1, 1}).expand_as(target);
    loss_sum += objective.loss(prediction, batch).item<double>() * valid;
    delta_sum += delta_e76(objective.predicted_lab(prediction), target, batch.valid).item<double>() * valid;
    baseline_sum += delta_e76(baseline, target, batch.valid).item<double>() * valid;
    pixels += valid;
  }
  model.train();
  ColourValidation result;
  if (pixels == 0) return result;
  result.loss = loss_sum / pixels;
  result.delta_e = delta_sum / pixels;
  result.baseline_delta_e = baseline_sum / pixels;
  result.pixels = pixels;
  return result;
}

}  // namespace tinct
