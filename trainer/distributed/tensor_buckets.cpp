#include "distributed/tensor_buckets.hpp"

#include <torch/torch.h>

namespace tinct {

std::vector<TensorBucket> plan_buckets(const std::vector<at::Tensor>& tensors, std::size_t bucket_bytes) {
  std::vector<TensorBucket> buckets;
  std::size_t bytes = 0;
  c10::ScalarType type = c10::ScalarType::Undefined;
  for (std::size_t i = 0; i < tensors.size(); ++i) {
    if (!tensors[i].defined()) continue;
    const std::size_t size = static_cast<std::size_t>(tensors[i].numel()) * tensors[i].element_size();
    const bool full = !buckets.empty() && bytes + size > bucket_bytes;
    if (buckets.empty() || tensors[i].scalar_type() != type || full) {
      buckets.emplace_back();
      bytes = 0;
      type = tensors[i].scalar_type();
    }
    buckets.back().members.push_back(i);
    buckets.back().elements += tensors[i].numel();
    bytes += size;
  }
  return buckets;
}

at::Tensor flatten_bucket(const std::vector<at::Tensor>& tensors, const TensorBucket& bucket) {
  std::vector<at::Tensor> views;
  for (std::size_t i : bucket.members) views.push_back(tensors[i].detach().reshape({-1}));
  return torch::cat(views);
}

void unflatten_bucket(const at::Tensor& flat, const TensorBucket& bucket, const std::vector<at::Tensor>& tensors) {
  torch::NoGradGuard no_grad;
  std::int64_t offset = 0;
  for (std::size_t i : bucket.members) {
    const std::int64_t count = tensors[i].numel();
    tensors[i].copy_(flat.narrow(0, offset, count).view_as(tensors[i]));
    offset += count;
  }
}

}  // namespace tinct
