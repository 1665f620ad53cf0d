// Lists of tensors (gradients, parameters, buffers) grouped into flat buckets, so a
// collective moves a few large messages instead of one per tensor. The plan depends only
// on the tensors' sizes and types, so every rank makes the same one.
#pragma once

#include <cstddef>
#include <cstdint>
#include <vector>

namespace at {
class Tensor;
}

namespace tinct {

struct TensorBucket {
  std::vector<std::size_t> members;  // positions in the tensor list, in order
  std::int64_t elements = 0;         // their total element count
};

// Consecutive tensors of one type, at most `bucket_bytes` each (a larger tensor gets a
// bucket of its own); undefined tensors are left out.
std::vector<TensorBucket> plan_buckets(const std::vector<at::Tensor>& tensors, std::size_t bucket_bytes);

// The members' values one after another, in one new contiguous tensor.
at::Tensor flatten_bucket(const std::vector<at::Tensor>& tensors, const TensorBucket& bucket);

// `flat` copied back into the members, in place.
void unflatten_bucket(const at::Tensor& flat, const TensorBucket& bucket, const std::vector<at::Tensor>& tensors);

}  // namespace tinct
