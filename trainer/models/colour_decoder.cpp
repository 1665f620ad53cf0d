#include "models/colour_decoder.hpp"

#include <torch/torch.h>

#include <algorithm>

#include "models/encoder.hpp"
#include "util/error.hpp"

namespace tinct {
namespace {

constexpr std::int64_t kMinStepChannels = 8;

bool is_power_of_two(std::int64_t value) { return value > 0 && (value & (value - 1)) == 0; }

// Bilinear x2. Under bf16 autocast (pretraining's train.precision) it runs in fp32 and hands
// bf16 on: LibTorch 1.13's bf16 bilinear backward is a slow scalar loop, and with it in fp32
// the compact model's bf16 step took 404 instead of 611 ms of CPU time (batch 32, one thread).
// The layer and its arithmetic are the same as in fp32 training.
torch::Tensor upsample_twice(const torch::Tensor& x) {
  namespace F = torch::nn::functional;
  const bool bf16 = x.scalar_type() == torch::kBFloat16;
  const torch::Tensor up = F::interpolate(bf16 ? x.to(torch::kFloat) : x,
                                          F::InterpolateFuncOptions()
                                              .size(std::vector<std::int64_t>{2 * x.size(2), 2 * x.size(3)})
                                              .mode(torch::kBilinear)
                                              .align_corners(false));
  return bf16 ? up.to(torch::kBFloat16) : up;
}

}  // namespace

DecoderStepImpl::DecoderStepImpl(std::int64_t in_channels, std::int64_t skip_channels,
                                 std::int64_t channels)
    : conv(torch::nn::Conv2d(
          torch::nn::Conv2dOptions(in_channels + skip_channels, channels, /*kernel_size=*/3)
              .padding(1)
              .bias(false))),
      bn(batch_norm_2d(channels)) {
  register_module("conv", conv);
  register_module("bn", bn);
}

torch::Tensor DecoderStepImpl::forward(torch::Tensor x, const torch::Tensor& skip) {
  // (B, Cin, h, w) -> (B, Cin, 2h, 2w)
  x = upsample_twice(x);
  // -> (B, Cin + Cskip, 2h, 2w)
  if (skip.defined()) x = torch::cat({x, skip}, /*dim=*/1);
  // -> (B, C, 2h, 2w)
  x = torch::relu(bn(conv(x)));
  return x;
}

ColourDecoderImpl::ColourDecoderImpl(const std::vector<std::int64_t>& stage_channels,
                                     const std::vector<std::int64_t>& stage_strides,
                                     const DecoderSpec& spec)
    : output_channels_(decoder_output_channels(spec)) {
  if (stage_channels.empty() || stage_channels.size() != stage_strides.size()) {
    fail_usage("model: the decoder needs one channel count and one stride per encoder stage");
  }
  for (std::size_t i = 0; i < stage_strides.size(); ++i) {
    if (!is_power_of_two(stage_strides[i]) || (i > 0 && stage_strides[i] < stage_strides[i - 1])) {
      fail_usage("model: encoder strides must be powers of 2, shallow to deep");
    }
  }
  std::int64_t in_channels = stage_channels.back();
  std::int64_t channels = spec.channels > 0 ? spec.channels : in_channels / 2;
  for (std::int64_t stride = stage_strides.back() / 2; stride >= 1; stride /= 2) {
    channels = std::max(channels, kMinStepChannels);
    // The deepest encoder stage at this stride (the last one is the decoder's input).
    int skip = -1;
    for (std::size_t i = 0; i + 1 < stage_strides.size(); ++i) {
      if (spec.skips && stage_strides[i] == stride) skip = static_cast<int>(i);
    }
    const std::int64_t skip_channels = skip >= 0 ? stage_channels[skip] : 0;
    steps_.push_back(register_module("up" + std::to_string(stride),
                                     DecoderStep(in_channels, skip_channels, channels)));
    skip_stage_.push_back(skip);
    step_channels_.push_back(channels);
    in_channels = channels;
    channels /= 2;
  }
  // The steps get torchvision's init; the 1x1 head keeps LibTorch's default (fan_in based),
  // so the first outputs stay small beside targets scaled to about [-1, 1].
  init_conv_bn(*this);
  head = register_module(
      "head", torch::nn::Conv2d(torch::nn::Conv2dOptions(in_channels, output_channels_,
                                                         /*kernel_size=*/1)));
}

torch::Tensor ColourDecoderImpl::forward(const std::vector<torch::Tensor>& stages) {
  return forward_steps(stages).back();
}

std::vector<torch::Tensor> ColourDecoderImpl::forward_steps(const std::vector<torch::Tensor>& stages) {
  std::vector<torch::Tensor> outputs;
  // (B, Cdeep, H/S, W/S)
  torch::Tensor x = stages.back();
  // each step: (B, C, h, w) -> (B, C', 2h, 2w); after all: (B, Clast, H, W)
  for (std::size_t i = 0; i < steps_.size(); ++i) {
    const int skip = skip_stage_[i];
    x = steps_[i](x, skip >= 0 ? stages[skip] : torch::Tensor());
    outputs.push_back(x);
  }
  // -> (B, output_channels, H, W)
  outputs.push_back(head(x));
  return outputs;
}

}  // namespace tinct
