#include "models/resnet_encoder.hpp"

#include <torch/torch.h>

#include "util/error.hpp"

namespace tinct {
namespace {

SyncableBatchNorm2d batch_norm(std::int64_t channels) { return batch_norm_2d(channels); }

torch::nn::Conv2d conv3x3(std::int64_t in, std::int64_t out, std::int64_t stride) {
  return torch::nn::Conv2d(torch::nn::Conv2dOptions(in, out, /*kernel_size=*/3)
                               .stride(stride)
                               .padding(1)
                               .bias(false));
}

std::vector<int> blocks_per_layer(int depth) {
  if (depth == 18) return {2, 2, 2, 2};
  if (depth == 34) return {3, 4, 6, 3};
  fail_usage("model: ResNet depth must be 18 or 34, got " + std::to_string(depth));
}

}  // namespace

BasicBlockImpl::BasicBlockImpl(std::int64_t in_channels, std::int64_t channels,
                               std::int64_t stride)
    : conv1(conv3x3(in_channels, channels, stride)),
      conv2(conv3x3(channels, channels, /*stride=*/1)),
      bn1(batch_norm(channels)),
      bn2(batch_norm(channels)) {
  register_module("conv1", conv1);
  register_module("bn1", bn1);
  register_module("conv2", conv2);
  register_module("bn2", bn2);
  if (stride != 1 || in_channels != channels) {
    downsample = torch::nn::Sequential(
        torch::nn::Conv2d(torch::nn::Conv2dOptions(in_channels, channels, /*kernel_size=*/1)
                              .stride(stride)
                              .bias(false)),
        batch_norm(channels));
    register_module("downsample", downsample);
  }
}

torch::Tensor BasicBlockImpl::forward(torch::Tensor x) {
  // (B, Cin, H, W) -> (B, C, H/stride, W/stride)
  const torch::Tensor identity = downsample ? downsample->forward(x) : x;
  x = torch::relu(bn1(conv1(x)));
  x = bn2(conv2(x));
  x = torch::relu(x + identity);
  return x;
}

ResNetEncoderImpl::ResNetEncoderImpl(int depth, std::int64_t bands, double width)
    : conv1(torch::nn::Conv2d(torch::nn::Conv2dOptions(bands, scaled_channels(64, width),
                                                       /*kernel_size=*/7)
                                  .stride(2)
                                  .padding(3)
                                  .bias(false))),
      bn1(batch_norm(scaled_channels(64, width))),
      maxpool(torch::nn::MaxPool2d(
          torch::nn::MaxPool2dOptions(/*kernel_size=*/3).stride(2).padding(1))) {
  const std::vector<int> blocks = blocks_per_layer(depth);
  for (const int base : {64, 128, 256, 512}) widths_.push_back(scaled_channels(base, width));

  register_module("conv1", conv1);
  register_module("bn1", bn1);
  register_module("maxpool", maxpool);
  std::int64_t in_channels = widths_[0];
  torch::nn::Sequential* layers[] = {&layer1, &layer2, &layer3, &layer4};
  for (std::size_t i = 0; i < 4; ++i) {
    torch::nn::Sequential layer;
    for (int b = 0; b < blocks[i]; ++b) {
      const std::int64_t stride = (i > 0 && b == 0) ? 2 : 1;
      layer->push_back(BasicBlock(in_channels, widths_[i], stride));
      in_channels = widths_[i];
    }
    *layers[i] = register_module("layer" + std::to_string(i + 1), layer);
  }
  init_conv_bn(*this);
}

std::vector<torch::Tensor> ResNetEncoderImpl::forward_stages(torch::Tensor x) {
  std::vector<torch::Tensor> stages;
  // (B, bands, H, W) -> (B, 64, H/2, W/2)
  x = torch::relu(bn1(conv1(x)));
  stages.push_back(x);
  // -> (B, 64, H/4, W/4)
  x = maxpool(x);
  stages.push_back(x);
  x = layer1->forward(x);
  stages.push_back(x);
  // -> (B, 128, H/8, W/8)
  x = layer2->forward(x);
  stages.push_back(x);
  // -> (B, 256, H/16, W/16)
  x = layer3->forward(x);
  stages.push_back(x);
  // -> (B, 512, H/32, W/32)
  x = layer4->forward(x);
  stages.push_back(x);
  return stages;
}

std::vector<std::int64_t> ResNetEncoderImpl::stage_channels() const {
  return {widths_[0], widths_[0], widths_[0], widths_[1], widths_[2], widths_[3]};
}

std::vector<std::int64_t> ResNetEncoderImpl::stage_strides() const { return {2, 4, 4, 8, 16, 32}; }

}  // namespace tinct
