#include "models/compact_encoder.hpp"

#include <torch/torch.h>

namespace tinct {
namespace {

torch::nn::Conv2d conv3x3(std::int64_t in, std::int64_t out, std::int64_t stride) {
  return torch::nn::Conv2d(torch::nn::Conv2dOptions(in, out, /*kernel_size=*/3)
                               .stride(stride)
                               .padding(1)
                               .bias(false));
}

SyncableBatchNorm2d batch_norm(std::int64_t channels) {
  return batch_norm_2d(channels);
}

}  // namespace

CompactStageImpl::CompactStageImpl(std::int64_t in_channels, std::int64_t channels)
    : down(conv3x3(in_channels, channels, /*stride=*/2)),
      conv(conv3x3(channels, channels, /*stride=*/1)),
      down_bn(batch_norm(channels)),
      bn(batch_norm(channels)) {
  register_module("down", down);
  register_module("down_bn", down_bn);
  register_module("conv", conv);
  register_module("bn", bn);
}

torch::Tensor CompactStageImpl::forward(torch::Tensor x) {
  // (B, Cin, H, W) -> (B, C, H/2, W/2)
  x = torch::relu(down_bn(down(x)));
  x = torch::relu(x + bn(conv(x)));
  return x;
}

CompactEncoderImpl::CompactEncoderImpl(std::int64_t bands, double width) {
  for (const int base : {16, 32, 64, 128, 256}) widths_.push_back(scaled_channels(base, width));
  stem = register_module("stem", conv3x3(bands, widths_[0], /*stride=*/1));
  stem_bn = register_module("stem_bn", batch_norm(widths_[0]));
  stage1 = register_module("stage1", CompactStage(widths_[0], widths_[1]));
  stage2 = register_module("stage2", CompactStage(widths_[1], widths_[2]));
  stage3 = register_module("stage3", CompactStage(widths_[2], widths_[3]));
  stage4 = register_module("stage4", CompactStage(widths_[3], widths_[4]));
  init_conv_bn(*this);
}

std::vector<torch::Tensor> CompactEncoderImpl::forward_stages(torch::Tensor x) {
  std::vector<torch::Tensor> stages;
  // (B, bands, H, W) -> (B, 16, H, W)
  x = torch::relu(stem_bn(stem(x)));
  stages.push_back(x);
  // -> (B, 32, H/2, W/2)
  x = stage1(x);
  stages.push_back(x);
  // -> (B, 64, H/4, W/4)
  x = stage2(x);
  stages.push_back(x);
  // -> (B, 128, H/8, W/8)
  x = stage3(x);
  stages.push_back(x);
  // -> (B, 256, H/16, W/16)
  x = stage4(x);
  stages.push_back(x);
  return stages;
}

std::vector<std::int64_t> CompactEncoderImpl::stage_channels() const { return widths_; }

std::vector<std::int64_t> CompactEncoderImpl::stage_strides() const { return {1, 2, 4, 8, 16}; }

}  // namespace tinct
