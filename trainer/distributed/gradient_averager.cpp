#include "distributed/gradient_averager.hpp"

#include <torch/torch.h>

#include "distributed/process_group.hpp"
#include "distributed/tensor_buckets.hpp"

namespace tinct {
namespace {

// (elements | one presence flag per member): flags count the ranks that had a gradient.
at::Tensor pack(const std::vector<at::Tensor>& parameters, const TensorBucket& bucket) {
  const std::int64_t members = static_cast<std::int64_t>(bucket.members.size());
  at::Tensor flat = torch::empty({bucket.elements + members}, parameters[bucket.members.front()].options());
  std::vector<double> present;
  std::int64_t offset = 0;
  for (std::size_t i : bucket.members) {
    const at::Tensor& grad = parameters[i].grad();
    at::Tensor slot = flat.narrow(0, offset, parameters[i].numel());
    grad.defined() ? slot.copy_(grad.reshape({-1})) : slot.zero_();
    present.push_back(grad.defined() ? 1 : 0);
    offset += parameters[i].numel();
  }
  flat.narrow(0, bucket.elements, members).copy_(torch::tensor(present, torch::kFloat64));
  return flat;
}

void unpack(const at::Tensor& flat, const std::vector<at::Tensor>& parameters, const TensorBucket& bucket) {
  const std::int64_t members = static_cast<std::int64_t>(bucket.members.size());
  const at::Tensor present = flat.narrow(0, bucket.elements, members).to(torch::kFloat64).contiguous();
  std::int64_t offset = 0;
  for (std::size_t m = 0; m < bucket.members.size(); ++m) {
    const at::Tensor& parameter = parameters[bucket.members[m]];
    const std::int64_t count = parameter.numel();
    if (present.data_ptr<double>()[m] > 0) {  // some rank had a gradient
      at::Tensor& grad = parameter.mutable_grad();
      if (!grad.defined()) grad = torch::zeros_like(parameter);
      grad.copy_(flat.narrow(0, offset, count).view_as(parameter));
    }
    offset += count;
  }
}

}  // namespace

GradientAverager::GradientAverager(ProcessGroup& group, std::size_t bucket_bytes)
    : group_(&group), bucket_bytes_(bucket_bytes) {}

void GradientAverager::operator()(const std::vector<at::Tensor>& parameters) const {
  if (group_->single()) return;
  torch::NoGradGuard no_grad;
  std::vector<at::Tensor> trainable;
  for (const at::Tensor& parameter : parameters) trainable.push_back(parameter.requires_grad() ? parameter : at::Tensor());
  for (const TensorBucket& bucket : plan_buckets(trainable, bucket_bytes_)) {
    at::Tensor flat = pack(trainable, bucket);
    group_->sum(flat, "gradient all-reduce");
    flat.narrow(0, 0, bucket.elements).div_(group_->world());
    unpack(flat, trainable, bucket);
  }
}

std::function<void(const std::vector<at::Tensor>&)> make_gradient_sync(ProcessGroup& group, std::size_t bucket_bytes) {
  if (group.single()) return {};
  return GradientAverager(group, bucket_bytes);
}

}  // namespace tinct
