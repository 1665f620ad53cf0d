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

SyncableBatchNorm2dImpl::SyncableBatchNorm2dImpl(std::int64_t channels_, double eps_, double momentum_)
    : channels(channels_), eps(eps_), momentum(momentum_) {
  reset();
}

void SyncableBatchNorm2dImpl::reset() {
  // The names and order of torch's BatchNorm2d: checkpoints and optimiser state match.
  weight = register_parameter("weight", torch::ones({channels}));
  bias = register_parameter("bias", torch::zeros({channels}));
  running_mean = register_buffer("running_mean", torch::zeros({channels}));
  running_var = register_buffer("running_var", torch::ones({channels}));
  num_batches_tracked = register_buffer("num_batches_tracked", torch::tensor(0, torch::kLong));
}

void SyncableBatchNorm2dImpl::pretty_print(std::ostream& stream) const {
  stream << "tinct::SyncableBatchNorm2d(" << channels << ", eps=" << eps << ", momentum=" << momentum
         << (sum_ ? ", synchronised)" : ")");
}

torch::Tensor SyncableBatchNorm2dImpl::forward(const torch::Tensor& input) {
  TORCH_CHECK(input.dim() == 4, "expected a 4-D input (B, C, H, W), got ", input.dim(), "-D");
  if (sum_ && is_training()) return synchronised_forward(input);
  if (is_training()) num_batches_tracked += 1;  // as torch's BatchNorm2d, which never reads it back here
  return torch::batch_norm(input, weight, bias, running_mean, running_var, is_training(), momentum, eps,
                           at::globalContext().userEnabledCuDNN());
}

torch::Tensor SyncableBatchNorm2dImpl::synchronised_forward(const torch::Tensor& input) {
  const std::vector<std::int64_t> reduced{0, 2, 3}, shape{1, channels, 1, 1};
  torch::Tensor count = torch::full({1}, static_cast<double>(input.numel() / channels), torch::kFloat64);
  sum_(count);
  const double n = count.item<double>();
  // Double precision, as ATen's own batch statistics on the CPU; two passes for the variance.
  const torch::Tensor x = input.to(torch::kFloat64);
  const torch::Tensor mean = ProcessSumFunction::apply(x.sum(reduced), &sum_) / n;
  const torch::Tensor centred = x - mean.view(shape);
  const torch::Tensor variance = ProcessSumFunction::apply(centred.pow(2).sum(reduced), &sum_) / n;
  const torch::Tensor normalised = (centred * torch::rsqrt(variance + eps).view(shape)).to(input.scalar_type());
  {
    torch::NoGradGuard no_grad;
    num_batches_tracked += 1;
    running_mean.mul_(1 - momentum).add_(mean.to(running_mean.scalar_type()) * momentum);
    const torch::Tensor unbiased = variance * (n / std::max(n - 1, 1.0));
    running_var.mul_(1 - momentum).add_(unbiased.to(running_var.scalar_type()) * momentum);
  }
  return normalised * weight.view(shape) + bias.view(shape);
}

SyncableBatchNorm2d batch_norm_2d(std::int64_t channels) { return SyncableBatchNorm2d(channels); }

void synchronise_batch_norm(torch::nn::Module& model, const ProcessSum& sum) {
  model.apply([&sum](torch::nn::Module& module) {
    if (auto* norm = module.as<SyncableBatchNorm2dImpl>()) norm->synchronise(sum);
  });
}

}  // namespace tinct
