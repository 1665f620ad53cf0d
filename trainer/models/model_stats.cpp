#include "models/model_stats.hpp"

#include <ATen/record_function.h>
#include <torch/torch.h>

#include <cstring>
#include <unordered_map>

namespace tinct {
namespace {

// LibTorch's C++ modules have no forward hooks, so the count watches operator calls
// through RecordFunction instead and attributes a call to a module by its weight: before
// the pass, each Conv2d and Linear weight's data pointer is mapped to the MACs per output
// element (Conv2d: in/groups x kH x kW; Linear: in). A watched call taking one of those
// weights (or a transposed view of it, as Linear's addmm and matmul do) adds output elements
// x that figure. Only the outermost watched call counts, so aten::linear -> addmm or
// matmul -> mm is counted once. Inputs are seen by the start callback only, outputs by the
// end callback. Thread-local: the calls happen on the calling thread.
struct MacCounter {
  std::unordered_map<const void*, std::int64_t> macs_per_output;  // by weight data pointer
  std::int64_t total = 0;
  int depth = 0;  // watched calls open
};
thread_local MacCounter* active_counter = nullptr;

struct MacsPerOutput : at::ObserverContext {
  explicit MacsPerOutput(std::int64_t value) : value(value) {}
  std::int64_t value;
};

bool is_watched(const char* name) {
  for (const char* watched :
       {"aten::convolution", "aten::linear", "aten::addmm", "aten::matmul", "aten::mm"}) {
    if (std::strcmp(name, watched) == 0) return true;
  }
  return false;
}

std::unique_ptr<at::ObserverContext> start_call(const at::RecordFunction& call) {
  MacCounter* counter = active_counter;
  if (counter == nullptr || counter->depth > 0 || !is_watched(call.name())) return nullptr;
  for (const c10::IValue& input : call.inputs()) {
    if (!input.isTensor()) continue;
    const at::Tensor& tensor = input.toTensor();
    if (!tensor.defined()) continue;
    const auto found = counter->macs_per_output.find(tensor.data_ptr());
    if (found == counter->macs_per_output.end()) continue;
    ++counter->depth;
    return std::make_unique<MacsPerOutput>(found->second);
  }
  return nullptr;
}

void end_call(const at::RecordFunction& call, at::ObserverContext* context) {
  MacCounter* counter = active_counter;
  if (context == nullptr || counter == nullptr) return;
  --counter->depth;
  const std::int64_t per_output = static_cast<MacsPerOutput*>(context)->value;
  counter->total += call.outputs().at(0).toTensor().numel() * per_output;
}

}  // namespace

std::int64_t parameter_count(const torch::nn::Module& module) {
  std::int64_t count = 0;
  for (const auto& parameter : module.parameters(/*recurse=*/true)) count += parameter.numel();
  return count;
}

std::int64_t conv_linear_macs(torch::nn::Module& module,
                              const std::vector<std::int64_t>& input_shape,
                              const std::function<void(const at::Tensor&)>& forward) {
  MacCounter counter;
  module.apply([&counter](torch::nn::Module& child) {
    if (auto* conv = child.as<torch::nn::Conv2d>()) {
      // weight (Cout, Cin/groups, kH, kW)
      const torch::Tensor& weight = conv->weight;
      counter.macs_per_output[weight.data_ptr()] = weight.numel() / weight.size(0);
    } else if (auto* linear = child.as<torch::nn::Linear>()) {
      // weight (out, in)
      counter.macs_per_output[linear->weight.data_ptr()] = linear->weight.size(1);
    }
  });

  const bool was_training = module.is_training();
  module.eval();
  torch::NoGradGuard no_grad;
  at::RecordFunctionGuard enable_recording(/*is_enabled=*/true);
  const at::CallbackHandle handle =
      at::addThreadLocalCallback(at::RecordFunctionCallback(&start_call, &end_call)
                                     .needsInputs(true)
                                     .needsOutputs(true)
                                     .scopes({at::RecordScope::FUNCTION}));
  const auto finish = [&] {
    at::removeCallback(handle);
    active_counter = nullptr;
    module.train(was_training);
  };
  active_counter = &counter;
  try {
    forward(torch::zeros(input_shape));
  } catch (...) {
    finish();
    throw;
  }
  finish();
  return counter.total;
}

}  // namespace tinct
