// The models' batch normalisation: torch's BatchNorm2d over (B, C, H, W) with the same
// parameters, buffers, names and arithmetic (archives are unchanged), which can also
// compute its training statistics over the whole global batch of a data-parallel job
// instead of this process's part (distributed.batch_norm: sync). Its own class rather
// than a subclass of torch's: LibTorch does not export what a subclass's vtable needs.
#pragma once

#include <torch/nn/cloneable.h>
#include <torch/nn/module.h>
#include <torch/nn/pimpl.h>

#include <functional>
#include <ostream>

namespace tinct {

// Replaces a tensor by its element-wise sum over every process of the job, in place.
using ProcessSum = std::function<void(at::Tensor&)>;

class SyncableBatchNorm2dImpl : public torch::nn::Cloneable<SyncableBatchNorm2dImpl> {
 public:
  explicit SyncableBatchNorm2dImpl(std::int64_t channels, double eps = 1e-5, double momentum = 0.1);

  // Eval mode, or no sum set: torch's batch_norm with this module's state. Training mode
  // with a sum: mean and variance of the global batch (small all-reduces in forward and
  // backward, so every process must run the same layers in the same order); the running
  // statistics then follow the global ones and stay identical on every process.
  torch::Tensor forward(const torch::Tensor& input);
  void synchronise(ProcessSum sum) { sum_ = std::move(sum); }

  void reset() override;
  void pretty_print(std::ostream& stream) const override;

  std::int64_t channels;
  double eps, momentum;
  torch::Tensor weight, bias, running_mean, running_var, num_batches_tracked;

 private:
  torch::Tensor synchronised_forward(const torch::Tensor& input);

  ProcessSum sum_;
};
TORCH_MODULE(SyncableBatchNorm2d);

SyncableBatchNorm2d batch_norm_2d(std::int64_t channels);  // eps 1e-5, momentum 0.1 (torch's defaults)

// Every SyncableBatchNorm2d in `model` sums its statistics with `sum` (empty: local again).
void synchronise_batch_norm(torch::nn::Module& model, const ProcessSum& sum);

}  // namespace tinct
