// What every encoder offers the decoder and the classifier head: features at several
// strides, shallow to deep, with their channel counts and strides known before any forward.
// Encoders are built by name from an EncoderSpec through one explicit table (make_encoder).
#pragma once

#include <torch/nn/module.h>
#include <torch/nn/pimpl.h>

#include <cstdint>
#include <memory>
#include <vector>

#include "models/model_spec.hpp"

namespace tinct {

class EncoderImpl : public torch::nn::Module {
 public:
  // One (B, stage_channels()[i], H / stage_strides()[i], W / stage_strides()[i]) per stage.
  virtual std::vector<torch::Tensor> forward_stages(torch::Tensor x) = 0;
  virtual std::vector<std::int64_t> stage_channels() const = 0;
  virtual std::vector<std::int64_t> stage_strides() const = 0;

  std::int64_t feature_channels() const { return stage_channels().back(); }
  // The deepest stage: (B, bands, H, W) -> (B, feature_channels(), H / S, W / S).
  torch::Tensor forward(torch::Tensor x) { return forward_stages(std::move(x)).back(); }
};
TORCH_MODULE(Encoder);

// Fails (usage error) with the list of valid names on an unknown spec.name.
std::shared_ptr<EncoderImpl> make_encoder(const EncoderSpec& spec);

// torchvision's initialisation: Conv2d weights Kaiming-normal (fan_out, relu), no change
// to conv biases; BatchNorm2d weight 1, bias 0. Applies to every submodule of `module`.
void init_conv_bn(torch::nn::Module& module);

}  // namespace tinct
