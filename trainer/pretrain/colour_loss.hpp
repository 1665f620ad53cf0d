// The pretext losses of band-to-colour pretraining, on scaled Lab (L/100, a/128, b/128):
// l1, smooth_l1 and l2 regression with channel weights, or classification over quantised
// ab bins with class rebalancing (Zhang, Isola & Efros 2016, "Colorful Image Colorization"),
// all averaged over valid pixels only; plus the CIE76 colour difference validation reports.
// Reading chips and building the decoder live elsewhere.
#pragma once

#include <torch/torch.h>

#include <array>

#include "pretrain/colour_loss_settings.hpp"

namespace tinct {

// B = batch, H, W = chip rows and columns, Q = number of ab bins.

// Fails (usage) on negative or all-zero weights, a negative beta, fewer than 2 bins per
// axis or a lambda outside (0, 1].
void check_colour_loss_settings(const ColourLossSettings& settings);

// Channels the decoder must produce: 3 (L, a, b) for regression, 1 + Q for ab_bins.
int colour_output_channels(const ColourLossSettings& settings);

// (B, 3, H, W) uint8 codes in the 8-bit encoding (L*255/100, a+128, b+128)
// -> (B, 3, H, W) float scaled Lab (L/100, a/128, b/128).
torch::Tensor colour_targets(const torch::Tensor& lab_codes_u8);

// pred, target (B, 3, H, W) float; valid (B, H, W) bool or uint8. Per-pixel loss of each
// channel times its weight, summed over valid pixels and divided by (valid pixels x sum of
// weights). No valid pixel gives a zero that still back-propagates (zero gradients).
torch::Tensor regression_loss(const torch::Tensor& pred, const torch::Tensor& target,
                              const torch::Tensor& valid, const ColourLossSettings& settings);

// A per_axis x per_axis grid over [-110, 110] on a and b (Lab units); bin q = ia * per_axis
// + ib. Values outside the range fall into the edge bins. The full grid is kept (no
// in-gamut subset as in the paper's Q = 313): bins never seen get no targets.
struct AbBinning {
  explicit AbBinning(int per_axis);
  static constexpr double kLimit = 110.0;
  int per_axis;
  int count() const { return per_axis * per_axis; }  // Q
  double width() const { return 2 * kLimit / per_axis; }
  double centre(int axis_index) const { return -kLimit + (axis_index + 0.5) * width(); }
  torch::Tensor centres_scaled() const;  // (Q, 2) float: a/128, b/128 of each bin centre
};

// (B, 3, H, W) scaled Lab -> (B, H, W) int64 bin of each pixel's (a, b).
torch::Tensor ab_bin_index(const torch::Tensor& target_scaled, const AbBinning& binning);

// (Q) int64 count of each bin over the valid pixels; add these up over the training chips
// to get the empirical distribution p for rebalancing_weights.
torch::Tensor count_ab_bins(const torch::Tensor& target_scaled, const torch::Tensor& valid,
                            const AbBinning& binning);

// (Q) counts -> (Q) float weights w_q proportional to ((1 - lambda) p_q + lambda / Q)^-1,
// normalised so that sum_q p_q w_q = 1 (the paper's equation 4). p is used as counted:
// the paper's Gaussian smoothing of p (sigma 5) is not applied.
torch::Tensor rebalancing_weights(const torch::Tensor& bin_counts, double lambda);

// pred (B, 1 + Q, H, W): channel 0 regresses scaled L, channels 1.. are the bin logits.
// Loss = channel_weights[0] x smooth L1 (beta smooth_l1_beta) on L + mean(channel_weights[1],
// channel_weights[2]) x cross-entropy weighted by the weight of each target's bin; both
// averaged over valid pixels (the weighted sum divided by the pixel count, as the paper).
torch::Tensor ab_bins_loss(const torch::Tensor& pred, const torch::Tensor& target,
                           const torch::Tensor& valid, const AbBinning& binning,
                           const torch::Tensor& bin_weights, const ColourLossSettings& settings);

// logits (B, Q, H, W) -> (B, 2, H, W) scaled a, b: the annealed mean, the expectation of
// the bin centres under softmax(logits / T). The paper uses T = 0.38; T = 1 is the mean.
constexpr double kAnnealedMeanTemperature = 0.38;
torch::Tensor ab_from_logits(const torch::Tensor& logits, const AbBinning& binning,
                             double temperature);

// ab_bins output (B, 1 + Q, H, W) -> (B, 3, H, W) scaled Lab, for previews and delta E.
torch::Tensor lab_from_ab_bins_output(const torch::Tensor& pred, const AbBinning& binning,
                                      double temperature);

// The configured loss: regression_loss, or ab_bins_loss (bin_weights needed only then).
torch::Tensor colour_loss(const torch::Tensor& pred, const torch::Tensor& target,
                          const torch::Tensor& valid, const ColourLossSettings& settings,
                          const torch::Tensor& bin_weights = {});

// Mean CIE76 delta E*ab in Lab units (scaled inputs are unscaled first) over valid pixels,
// as a 0-dim double tensor without gradient; 0 when no pixel is valid.
torch::Tensor delta_e76(const torch::Tensor& pred_scaled, const torch::Tensor& target_scaled,
                        const torch::Tensor& valid);

}  // namespace tinct
