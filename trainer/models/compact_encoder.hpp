// tinct's default encoder, sized for CPU training on 32-64 px chips of 3-12 bands: a 3x3
// stem at chip resolution, then four stages that halve the resolution, each a stride-2
// 3x3 conv + BN + ReLU followed by a residual 3x3 conv + BN (added, then ReLU).
// Width 1 at 64 px, 12 bands: 1,178,720 parameters and 63,700,992 conv MACs, against
// resnet18's 11,204,736 and 176,947,200 (test "compact encoder size"). With the default
// decoder (skips, lab; 113,442,816 MACs) the whole model makes 177,143,808 MACs.
#pragma once

#include <torch/nn/modules/conv.h>

#include "models/batch_norm.hpp"
#include "models/encoder.hpp"

namespace tinct {

// (B, Cin, H, W) -> (B, C, H/2, W/2): x = relu(bn(conv_s2(x))); x = relu(x + bn(conv(x))).
class CompactStageImpl : public torch::nn::Module {
 public:
  CompactStageImpl(std::int64_t in_channels, std::int64_t channels);
  torch::Tensor forward(torch::Tensor x);

 private:
  torch::nn::Conv2d down{nullptr}, conv{nullptr};
  SyncableBatchNorm2d down_bn{nullptr}, bn{nullptr};
};
TORCH_MODULE(CompactStage);

// forward_stages returns five stages (channels at width 1; strides):
//   0 stem (16; 1)   1 stage1 (32; 2)   2 stage2 (64; 4)   3 stage3 (128; 8)   4 stage4 (256; 16)
class CompactEncoderImpl : public EncoderImpl {
 public:
  CompactEncoderImpl(std::int64_t bands, double width = 1.0);

  std::vector<torch::Tensor> forward_stages(torch::Tensor x) override;
  std::vector<std::int64_t> stage_channels() const override;
  std::vector<std::int64_t> stage_strides() const override;

 private:
  std::vector<std::int64_t> widths_;  // stem, stage1..stage4 channels
  torch::nn::Conv2d stem{nullptr};
  SyncableBatchNorm2d stem_bn{nullptr};
  CompactStage stage1{nullptr}, stage2{nullptr}, stage3{nullptr}, stage4{nullptr};
};
TORCH_MODULE(CompactEncoder);

}  // namespace tinct
