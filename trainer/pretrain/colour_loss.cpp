// The colour losses and delta E of colour_loss.hpp. Masks select pixels with masked_fill and
// divide by max(count, 1), so an all-invalid batch gives 0 with a grad_fn instead of NaN.
#include "pretrain/colour_loss.hpp"

#include "models/ab_bins.hpp"

#include <string>

#include "util/error.hpp"

namespace tinct {
namespace {

// Lab units per scaled unit: L/100, a/128, b/128.
constexpr double kLScale = 100.0;
constexpr double kAbScale = 128.0;

// (B, 3, H, W) float and (B, H, W) mask, or a clear message naming the mismatch.
void check_colour_shapes(const torch::Tensor& pred, const torch::Tensor& target,
                         const torch::Tensor& valid, std::int64_t pred_channels) {
  TORCH_CHECK(target.dim() == 4 && target.size(1) == 3,
              "colour target must be (B, 3, H, W), got ", target.sizes());
  TORCH_CHECK(pred.dim() == 4 && pred.size(1) == pred_channels,
              "colour prediction must have ", pred_channels, " channels, got ", pred.sizes());
  TORCH_CHECK(pred.size(0) == target.size(0) && pred.size(2) == target.size(2) &&
                  pred.size(3) == target.size(3),
              "prediction ", pred.sizes(), " and target ", target.sizes(), " differ");
  TORCH_CHECK(valid.dim() == 3 && valid.size(0) == target.size(0) &&
                  valid.size(1) == target.size(2) && valid.size(2) == target.size(3),
              "valid mask must be (B, H, W) = ", target.size(0), ", ", target.size(2), ", ",
              target.size(3), ", got ", valid.sizes());
}

torch::Tensor as_mask(const torch::Tensor& valid) { return valid.to(torch::kBool); }

// Sum of `per_pixel` (B, H, W) over valid pixels / max(valid pixels, 1). Invalid pixels
// are filled, not multiplied, so a NaN there cannot leak into the loss.
torch::Tensor mean_over_valid(const torch::Tensor& per_pixel, const torch::Tensor& mask) {
  const torch::Tensor count = mask.sum().to(per_pixel.scalar_type()).clamp_min(1);
  return per_pixel.masked_fill(mask.logical_not(), 0).sum() / count;
}

// (B, C, H, W) elementwise loss of the regression kinds.
torch::Tensor elementwise_loss(const torch::Tensor& pred, const torch::Tensor& target,
                               const ColourLossSettings& settings) {
  switch (settings.kind) {
    case ColourLossKind::l1: return (pred - target).abs();
    case ColourLossKind::l2: return (pred - target).pow(2);
    case ColourLossKind::smooth_l1:
      return torch::smooth_l1_loss(pred, target, at::Reduction::None, settings.smooth_l1_beta);
    case ColourLossKind::ab_bins: break;
  }
  TORCH_CHECK(false, "regression_loss does not compute ab_bins; call ab_bins_loss");
}

double weight_sum(const ColourLossSettings& settings) {
  return settings.channel_weights[0] + settings.channel_weights[1] + settings.channel_weights[2];
}

}  // namespace

void check_colour_loss_settings(const ColourLossSettings& settings) {
  const auto& w = settings.channel_weights;
  if (w[0] < 0 || w[1] < 0 || w[2] < 0 || weight_sum(settings) <= 0) {
    fail_usage("colour loss: channel weights must be >= 0 and not all 0 (got " +
               std::to_string(w[0]) + ", " + std::to_string(w[1]) + ", " +
               std::to_string(w[2]) + ")");
  }
  if (settings.smooth_l1_beta < 0) {
    fail_usage("colour loss: smooth_l1 beta must be >= 0 (0 is plain L1), got " +
               std::to_string(settings.smooth_l1_beta));
  }
  if (settings.kind != ColourLossKind::ab_bins) return;
  AbBinning check_bins(settings.ab_bins_per_axis);
  if (!(settings.rebalance_lambda > 0 && settings.rebalance_lambda <= 1)) {
    fail_usage("colour loss: rebalance lambda must be in (0, 1] (the paper uses 0.5), got " +
               std::to_string(settings.rebalance_lambda));
  }
}

int colour_output_channels(const ColourLossSettings& settings) {
  if (settings.kind != ColourLossKind::ab_bins) return 3;
  return 1 + AbBinning(settings.ab_bins_per_axis).count();
}

torch::Tensor colour_targets(const torch::Tensor& lab_codes_u8) {
  TORCH_CHECK(lab_codes_u8.dim() == 4 && lab_codes_u8.size(1) == 3 &&
                  lab_codes_u8.scalar_type() == torch::kUInt8,
              "colour codes must be (B, 3, H, W) uint8, got ", lab_codes_u8.sizes(), " ",
              lab_codes_u8.scalar_type());
  const torch::Tensor codes = lab_codes_u8.to(torch::kFloat);        // (B, 3, H, W)
  const torch::Tensor l = codes.narrow(1, 0, 1) / 255.0;             // L*255/100 -> L/100
  const torch::Tensor ab = (codes.narrow(1, 1, 2) - 128.0) / kAbScale;  // a+128 -> a/128
  return torch::cat({l, ab}, 1);                                      // (B, 3, H, W)
}

torch::Tensor regression_loss(const torch::Tensor& pred, const torch::Tensor& target,
                              const torch::Tensor& valid, const ColourLossSettings& settings) {
  check_colour_shapes(pred, target, valid, 3);
  const auto& w = settings.channel_weights;
  const torch::Tensor weights =
      torch::tensor({w[0], w[1], w[2]}, pred.options()).view({1, 3, 1, 1});
  const torch::Tensor per_pixel =
      (elementwise_loss(pred, target, settings) * weights).sum(1);  // (B, H, W)
  return mean_over_valid(per_pixel, as_mask(valid)) / weight_sum(settings);
}

AbBinning::AbBinning(int per_axis_bins) : per_axis(per_axis_bins) {
  if (per_axis < 2) {
    fail_usage("colour loss: ab bins per axis must be >= 2, got " + std::to_string(per_axis));
  }
}

torch::Tensor AbBinning::centres_scaled() const {
  // The grid is the decoder's (models/ab_bins.hpp): one definition of bin k.
  const auto grid = ab_bin_centres(per_axis);
  torch::Tensor centres = torch::empty({count(), 2}, torch::kFloat);  // (Q, 2)
  auto access = centres.accessor<float, 2>();
  for (int k = 0; k < count(); ++k) {
    access[k][0] = static_cast<float>(grid[static_cast<std::size_t>(k)].first / kAbScale);
    access[k][1] = static_cast<float>(grid[static_cast<std::size_t>(k)].second / kAbScale);
  }
  return centres;
}

torch::Tensor ab_bin_index(const torch::Tensor& target_scaled, const AbBinning& binning) {
  TORCH_CHECK(target_scaled.dim() == 4 && target_scaled.size(1) == 3,
              "scaled Lab must be (B, 3, H, W), got ", target_scaled.sizes());
  // Double, so that values on a bin edge land in the same bin on every platform.
  const torch::Tensor ab = target_scaled.narrow(1, 1, 2).to(torch::kDouble) * kAbScale;
  const torch::Tensor cell = ((ab + AbBinning::kLimit) / binning.width())
                                 .floor()
                                 .clamp(0, binning.per_axis - 1)
                                 .to(torch::kLong);  // (B, 2, H, W)
  return cell.select(1, 0) * binning.per_axis + cell.select(1, 1);  // (B, H, W)
}

torch::Tensor count_ab_bins(const torch::Tensor& target_scaled, const torch::Tensor& valid,
                            const AbBinning& binning) {
  const torch::Tensor bins = ab_bin_index(target_scaled, binning);  // (B, H, W)
  TORCH_CHECK(valid.sizes() == bins.sizes(), "valid mask must be (B, H, W) = ", bins.sizes(),
              ", got ", valid.sizes());
  return torch::bincount(bins.masked_select(as_mask(valid)), {}, binning.count());  // (Q)
}

torch::Tensor rebalancing_weights(const torch::Tensor& bin_counts, double lambda) {
  TORCH_CHECK(bin_counts.dim() == 1 && bin_counts.numel() > 0,
              "bin counts must be (Q), got ", bin_counts.sizes());
  if (!(lambda > 0 && lambda <= 1)) {
    fail_usage("colour loss: rebalance lambda must be in (0, 1], got " + std::to_string(lambda));
  }
  const torch::Tensor counts = bin_counts.to(torch::kDouble);
  const double total = counts.sum().item<double>();
  if (!(total > 0)) {
    fail_runtime("ab-bin rebalancing: no valid pixel was counted; check the chips' colour "
                 "and valid masks");
  }
  const auto bins = static_cast<double>(counts.numel());
  const torch::Tensor p = counts / total;
  const torch::Tensor w = 1.0 / ((1 - lambda) * p + lambda / bins);
  return (w / (p * w).sum()).to(torch::kFloat);  // (Q), sum_q p_q w_q = 1
}

torch::Tensor ab_bins_loss(const torch::Tensor& pred, const torch::Tensor& target,
                           const torch::Tensor& valid, const AbBinning& binning,
                           const torch::Tensor& bin_weights, const ColourLossSettings& settings) {
  const std::int64_t bins = binning.count();
  check_colour_shapes(pred, target, valid, 1 + bins);
  TORCH_CHECK(bin_weights.dim() == 1 && bin_weights.numel() == bins,
              "bin weights must be (", bins, "), got ", bin_weights.sizes());
  const auto& w = settings.channel_weights;

  const torch::Tensor l_loss = torch::smooth_l1_loss(
      pred.select(1, 0), target.select(1, 0), at::Reduction::None,
      settings.smooth_l1_beta);                                     // (B, H, W)
  const torch::Tensor target_bins = ab_bin_index(target, binning);  // (B, H, W)
  const torch::Tensor log_probs = torch::log_softmax(pred.narrow(1, 1, bins), 1);  // (B, Q, H, W)
  const torch::Tensor nll = -log_probs.gather(1, target_bins.unsqueeze(1)).squeeze(1);  // (B, H, W)
  const torch::Tensor pixel_weights =
      bin_weights.to(pred.options()).index({target_bins});  // (B, H, W)

  const torch::Tensor per_pixel = w[0] * l_loss + 0.5 * (w[1] + w[2]) * pixel_weights * nll;
  return mean_over_valid(per_pixel, as_mask(valid));
}

torch::Tensor ab_from_logits(const torch::Tensor& logits, const AbBinning& binning,
                             double temperature) {
  TORCH_CHECK(logits.dim() == 4 && logits.size(1) == binning.count(),
              "ab logits must be (B, ", binning.count(), ", H, W), got ", logits.sizes());
  TORCH_CHECK(temperature > 0, "annealed-mean temperature must be > 0, got ", temperature);
  // softmax(logits / T) = z^(1/T) renormalised, z = softmax(logits): the paper's f_T(z).
  const torch::Tensor probs = torch::softmax(logits / temperature, 1);          // (B, Q, H, W)
  const torch::Tensor centres = binning.centres_scaled().to(logits.options());  // (Q, 2)
  return torch::einsum("bqhw,qc->bchw", {probs, centres});                     // (B, 2, H, W)
}

torch::Tensor lab_from_ab_bins_output(const torch::Tensor& pred, const AbBinning& binning,
                                      double temperature) {
  TORCH_CHECK(pred.dim() == 4 && pred.size(1) == 1 + binning.count(),
              "ab_bins output must be (B, ", 1 + binning.count(), ", H, W), got ", pred.sizes());
  const torch::Tensor ab =
      ab_from_logits(pred.narrow(1, 1, binning.count()), binning, temperature);  // (B, 2, H, W)
  return torch::cat({pred.narrow(1, 0, 1), ab}, 1);                             // (B, 3, H, W)
}

torch::Tensor colour_loss(const torch::Tensor& pred, const torch::Tensor& target,
                          const torch::Tensor& valid, const ColourLossSettings& settings,
                          const torch::Tensor& bin_weights) {
  if (settings.kind != ColourLossKind::ab_bins) {
    return regression_loss(pred, target, valid, settings);
  }
  TORCH_CHECK(bin_weights.defined(), "ab_bins loss needs the rebalancing weights");
  return ab_bins_loss(pred, target, valid, AbBinning(settings.ab_bins_per_axis), bin_weights,
                      settings);
}

torch::Tensor delta_e76(const torch::Tensor& pred_scaled, const torch::Tensor& target_scaled,
                        const torch::Tensor& valid) {
  check_colour_shapes(pred_scaled, target_scaled, valid, 3);
  torch::NoGradGuard no_grad;
  const torch::Tensor unscale =
      torch::tensor({kLScale, kAbScale, kAbScale}, torch::kDouble).view({1, 3, 1, 1});
  const torch::Tensor difference =
      (pred_scaled.to(torch::kDouble) - target_scaled.to(torch::kDouble)) * unscale;
  const torch::Tensor per_pixel = difference.pow(2).sum(1).sqrt();  // (B, H, W)
  return mean_over_valid(per_pixel, as_mask(valid));
}

}  // namespace tinct
