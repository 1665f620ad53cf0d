// Size figures of a model: parameters, and multiply-accumulates of its Conv2d and Linear
// calls in one forward pass (the count torchvision-based tables use; BN, ReLU, pooling,
// bias and residual adds are not counted). For logs, headers and reference tests.
#pragma once

#include <cstdint>
#include <functional>
#include <vector>

namespace at {
class Tensor;
}
namespace torch::nn {
class Module;
}

namespace tinct {

// Elements of all parameters (buffers such as BN running statistics excluded).
std::int64_t parameter_count(const torch::nn::Module& module);

// Runs `forward` once on zeros of `input_shape` (e.g. {1, bands, 64, 64}), `module` in eval
// mode and without gradients (its training flag restored after), and adds up the calls of the
// Conv2d and Linear modules inside `module`: Conv2d output elements x in/groups x kH x kW,
// Linear rows x in x out. Convolutions or matrix products on other tensors are not counted.
std::int64_t conv_linear_macs(torch::nn::Module& module,
                              const std::vector<std::int64_t>& input_shape,
                              const std::function<void(const at::Tensor&)>& forward);

// The same for a module holder or pointer whose forward takes one tensor.
template <typename ModulePointer>
std::int64_t conv_linear_macs(ModulePointer& module, const std::vector<std::int64_t>& input_shape) {
  return conv_linear_macs(*module, input_shape, [&](const auto& x) { module->forward(x); });
}

}  // namespace tinct
