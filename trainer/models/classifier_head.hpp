// The trained fine-tuning head: on an encoder's deepest stage global average pooling, or on
// features already read out (models/head_spec.hpp), then dropout and a linear layer to class
// logits, optionally through one hidden layer with ReLU.
// Softmax and class weights belong to the loss, not here.
#pragma once

#include <torch/nn/modules/dropout.h>
#include <torch/nn/modules/linear.h>
#include <torch/nn/modules/pooling.h>

#include <cstdint>

namespace tinct {

class ClassifierHeadImpl : public torch::nn::Module {
 public:
  // hidden 0: pool, dropout, linear. hidden > 0: pool, dropout, linear, ReLU, dropout, linear.
  ClassifierHeadImpl(std::int64_t in_features, std::int64_t classes, double dropout,
                     std::int64_t hidden = 0);

  // (B, in_features, h, w) or (B, in_features) -> (B, classes) logits
  torch::Tensor forward(torch::Tensor x);

 private:
  torch::nn::AdaptiveAvgPool2d pool{nullptr};
  torch::nn::Dropout dropout{nullptr};
  torch::nn::Linear hidden{nullptr};  // null without a hidden layer
  torch::nn::Linear fc{nullptr};
};
TORCH_MODULE(ClassifierHead);

}  // namespace tinct
