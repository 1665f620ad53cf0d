// ResNet-18 and ResNet-34 (He et al. 2016) in torchvision's layout and parameter names
// (conv1, bn1, layer1.0.conv1, layer2.0.downsample.0, ...), the first convolution taking
// `bands` inputs, every stage's channels scaled by `width`. No fc: heads live elsewhere.
#pragma once

#include <torch/nn/modules/container/sequential.h>
#include <torch/nn/modules/conv.h>
#include <torch/nn/modules/pooling.h>

#include "models/batch_norm.hpp"
#include "models/encoder.hpp"

namespace tinct {

// conv3x3 - BN - ReLU - conv3x3 - BN, plus the input (through a 1x1 conv + BN where the
// stride or the channels change), then ReLU.
class BasicBlockImpl : public torch::nn::Module {
 public:
  BasicBlockImpl(std::int64_t in_channels, std::int64_t channels, std::int64_t stride);
  torch::Tensor forward(torch::Tensor x);

 private:
  torch::nn::Conv2d conv1{nullptr}, conv2{nullptr};
  SyncableBatchNorm2d bn1{nullptr}, bn2{nullptr};
  torch::nn::Sequential downsample{nullptr};  // empty unless stride or channels change
};
TORCH_MODULE(BasicBlock);

// forward_stages returns six stages (channels at width 1; strides):
//   0 stem after conv1, bn1, ReLU (64; 2)     1 after maxpool (64; 4)
//   2 layer1 (64; 4)   3 layer2 (128; 8)   4 layer3 (256; 16)   5 layer4 (512; 32)
// Stages 1-5 are torchvision's feature maps; stage 0 serves the decoder's stride-2 skip.
class ResNetEncoderImpl : public EncoderImpl {
 public:
  // depth 18 ([2,2,2,2] blocks) or 34 ([3,4,6,3]).
  ResNetEncoderImpl(int depth, std::int64_t bands, double width = 1.0);

  std::vector<torch::Tensor> forward_stages(torch::Tensor x) override;
  std::vector<std::int64_t> stage_channels() const override;
  std::vector<std::int64_t> stage_strides() const override;

 private:
  std::vector<std::int64_t> widths_;  // layer1..layer4 channels
  torch::nn::Conv2d conv1{nullptr};
  SyncableBatchNorm2d bn1{nullptr};
  torch::nn::MaxPool2d maxpool{nullptr};
  torch::nn::Sequential layer1{nullptr}, layer2{nullptr}, layer3{nullptr}, layer4{nullptr};
};
TORCH_MODULE(ResNetEncoder);

}  // namespace tinct
