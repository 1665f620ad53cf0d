#include "models/batch_norm.hpp"

#include <torch/torch.h>

#include <cstdint>

namespace tinct {
namespace {

// A differentiable sum over processes: the gradient of a sum is the sum of the gradients
// each process's loss sends back, so the backward pass sums too.
struct ProcessSumFunction : torch::autograd::Function<ProcessSumFunction> {
  static torch::Tensor forward(torch::autograd::AutogradContext* context, const torch::Tensor& local,
                               const ProcessSum* sum) {
    // saved_data holds IValues; the module that owns `sum` outlives the step's backward.
    context->saved_data["sum"] = static_cast<std::int64_t>(reinterpret_cast<std::intptr_t>(sum));
    torch::Tensor total = local.detach().contiguous().clone();
    (*sum)(total);
    return total;
  }

  static torch::autograd::variable_list backward(torch::autograd::AutogradContext* context,
                                                 torch::autograd::variable_list gradients) {
    const auto* sum = reinterpret_cast<const ProcessSum*>(
        static_cast<std::intptr_t>(context->saved_data["sum"].toInt()));
    torch::Tensor total = gradients[0].contiguous().clone();
    (*sum)(total);
    return {total, torch::Tensor()};
  }
};

}  // namespace

torch::Tensor SyncableBatchNorm2dImpl::forward(const torch::Tensor& input) {
  if (!sum_ || !is_training()) return torch::nn::BatchNorm2dImpl::forward(input);
  _check_input_dim(input);
  const std::int64_t channels = input.size(1);
  const std::vector<std::int64_t> reduced{0, 2, 3}, shape{1, channels, 1, 1};
  torch::Tensor count = torch::full({1}, static_cast<double>(input.numel() / channels), torch::kFloat64);
  sum_(count);
  const double n = count.item<double>();
  // Double precision, as ATen's own batch statistics on the CPU; two passes for the variance.
  const torch::Tensor x = input.to(torch::kFloat64);
  const torch::Tensor mean = ProcessSumFunction::apply(x.sum(reduced), &sum_) / n;
  const torch::Tensor centred = x - mean.view(shape);
  const torch::Tensor variance = ProcessSumFunction::apply(centred.pow(2).sum(reduced), &sum_) / n;
  torch::Tensor output = (centred * torch::rsqrt(variance + options.eps()).view(shape)).to(input.scalar_type());
  if (options.affine()) output = output * weight.view(shape) + bias.view(shape);
  if (options.track_running_stats()) {
    torch::NoGradGuard no_grad;
    num_batches_tracked += 1;
    const double momentum = options.momentum() ? *options.momentum()
                                               : 1.0 / num_batches_tracked.item<double>();
    running_mean.mul_(1 - momentum).add_(mean.to(running_mean.scalar_type()) * momentum);
    const torch::Tensor unbiased = variance * (n / std::max(n - 1, 1.0));
    running_var.mul_(1 - momentum).add_(unbiased.to(running_var.scalar_type()) * momentum);
  }
  return output;
}

SyncableBatchNorm2d batch_norm_2d(std::int64_t channels) {
  return SyncableBatchNorm2d(torch::nn::BatchNormOptions(channels).eps(1e-5).momentum(0.1));
}

void synchronise_batch_norm(torch::nn::Module& model, const ProcessSum& sum) {
  for (const auto& module : model.modules(/*include_self=*/true)) {
    if (auto* norm = module->as<SyncableBatchNorm2dImpl>()) norm->synchronise(sum);
  }
}

}  // namespace tinct
