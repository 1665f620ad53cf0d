#include "distributed/tensor_collectives.hpp"

#include <torch/torch.h>

#include "distributed/process_group.hpp"
#include "distributed/tensor_buckets.hpp"

namespace tinct {

void broadcast_tensors(ProcessGroup& group, const std::vector<at::Tensor>& tensors, std::size_t bucket_bytes) {
  if (group.single()) return;
  for (const TensorBucket& bucket : plan_buckets(tensors, bucket_bytes)) {
    at::Tensor flat = flatten_bucket(tensors, bucket);
    group.broadcast(flat, "broadcast of rank 0's parameters");
    unflatten_bucket(flat, bucket, tensors);
  }
}

void average_tensors(ProcessGroup& group, const std::vector<at::Tensor>& tensors, std::size_t bucket_bytes) {
  if (group.single()) return;
  std::vector<at::Tensor> floating;
  for (const at::Tensor& tensor : tensors) {
    floating.push_back(tensor.defined() && tensor.is_floating_point() ? tensor : at::Tensor());
  }
  for (const TensorBucket& bucket : plan_buckets(floating, bucket_bytes)) {
    at::Tensor flat = flatten_bucket(floating, bucket);
    group.sum(flat, "averaging of buffers (batch-norm statistics)");
    flat.div_(group.world());
    unflatten_bucket(flat, bucket, floating);
  }
}

}  // namespace tinct
