// The models' batch normalisation: torch's BatchNorm2d (same parameters, buffers and
// names, so archives are unchanged) that can compute its training statistics over the
// whole global batch of a data-parallel job instead of this process's part (batch_norm:
// sync). Without a cross-process sum, or in eval mode, it is torch's own BatchNorm2d.
#pragma once

#include <torch/nn/modules/batchnorm.h>

#include <functional>

namespace tinct {

// Replaces a tensor by its element-wise sum over every process of the job, in place.
using ProcessSum = std::function<void(at::Tensor&)>;

class SyncableBatchNorm2dImpl : public torch::nn::BatchNorm2dImpl {
 public:
  using torch::nn::BatchNorm2dImpl::BatchNorm2dImpl;

  // Training mode with a sum set: mean and variance of the global batch (two sums per call,
  // forward and backward alike, so every process must run the same layers in the same
  // order); the running statistics follow the global ones, identical on every process.
  torch::Tensor forward(const torch::Tensor& input);
  void synchronise(ProcessSum sum) { sum_ = std::move(sum); }

 private:
  ProcessSum sum_;
};
TORCH_MODULE(SyncableBatchNorm2d);

SyncableBatchNorm2d batch_norm_2d(std::int64_t channels);  // eps 1e-5, momentum 0.1 (torch's defaults)

// Every SyncableBatchNorm2d below `model` sums its statistics with `sum` (empty: local again).
void synchronise_batch_norm(torch::nn::Module& model, const ProcessSum& sum);

}  // namespace tinct
