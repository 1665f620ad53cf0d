#include "pretrain/colour_objective.hpp"

#include <algorithm>

namespace tinct {
namespace {

// An evenly spaced, deterministic sample of the training chips.
std::vector<ChipRef> spread_sample(const std::vector<ChipRef>& chips, int sample) {
  std::vector<ChipRef> picked;
  const std::size_t n = std::min<std::size_t>(chips.size(), static_cast<std::size_t>(sample));
  for (std::size_t i = 0; i < n; ++i) picked.push_back(chips[i * chips.size() / n]);
  return picked;
}

template <typename Visit>
void for_each_sample_batch(const ChipCollection& collection, const std::vector<ChipRef>& chips, Visit visit) {
  constexpr std::size_t kChunk = 64;
  for (std::size_t start = 0; start < chips.size(); start += kChunk) {
    const std::vector<ChipRef> part(chips.begin() + start, chips.begin() + std::min(chips.size(), start + kChunk));
    visit(assemble_batch(collection, part, std::vector<int>(part.size(), 0)));
  }
}

}  // namespace

ColourObjective::ColourObjective(const ColourLossSettings& settings, const ChipCollection& collection,
                                 const std::vector<ChipRef>& training, int sample)
    : settings_(settings), binning_(settings.ab_bins_per_axis) {
  check_colour_loss_settings(settings_);
  if (settings_.kind != ColourLossKind::ab_bins) return;
  torch::Tensor counts = torch::zeros({binning_.count()}, torch::kInt64);
  for_each_sample_batch(collection, spread_sample(training, sample), [&](const Batch& batch) {
    counts += count_ab_bins(colour_targets(batch.colour), batch.valid, binning_);
  });
  bin_weights_ = rebalancing_weights(counts, settings_.rebalance_lambda);
}

torch::Tensor ColourObjective::loss(const torch::Tensor& prediction, const Batch& batch) const {
  return colour_loss(prediction, colour_targets(batch.colour), batch.valid, settings_, bin_weights_);
}

torch::Tensor ColourObjective::predicted_lab(const torch::Tensor& prediction) const {
  if (settings_.kind != ColourLossKind::ab_bins) return prediction;
  return lab_from_ab_bins_output(prediction, binning_, kAnnealedMeanTemperature);
}

torch::Tensor mean_training_colour(const ChipCollection& collection, const std::vector<ChipRef>& training,
                                   int sample) {
  torch::Tensor sum = torch::zeros({3}, torch::kFloat64);
  double count = 0;
  for_each_sample_batch(collection, spread_sample(training, sample), [&](const Batch& batch) {
    const torch::Tensor target = colour_targets(batch.colour).to(torch::kFloat64);  // (B, 3, H, W)
    const torch::Tensor valid = batch.valid.unsqueeze(1).to(torch::kFloat64);         // (B, 1, H, W)
    sum += (target * valid).sum({0, 2, 3});
    count += valid.sum().item<double>();
  });
  return (sum / std::max(count, 1.0)).to(torch::kFloat32);
}

}  // namespace tinct
