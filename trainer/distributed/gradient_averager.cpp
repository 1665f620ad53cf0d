#include "distributed/gradient_averager.hpp"

#include <torch/torch.h>

#include "distributed/process_group.hpp"
#include "distributed/tensor_buckets.hpp"

namespace tinct {

// Reused while the trainable parameters keep their sizes: a fresh 25 MB tensor per bucket
// and step costs page faults comparable to the copies themselves.
struct GradientAverager::Buffers {
  std::vector<std::int64_t> shape;  // numel per parameter, 0 when frozen
  std::vector<TensorBucket> buckets;
  std::vector<at::Tensor> flats;    // (elements + one presence flag per member) per bucket
};

namespace {

std::vector<std::int64_t> trainable_shape(const std::vector<at::Tensor>& parameters) {
  std::vector<std::int64_t> shape;
  for (const at::Tensor& parameter : parameters) shape.push_back(parameter.requires_grad() ? parameter.numel() : 0);
  return shape;
}

// Gradients into `flat`, missing ones as zeros; the flags count the ranks that had one.
void pack(const std::vector<at::Tensor>& parameters, const TensorBucket& bucket, at::Tensor& flat) {
  std::vector<double> present;
  std::int64_t offset = 0;
  for (std::size_t i : bucket.members) {
    const at::Tensor& grad = parameters[i].grad();
    at::Tensor slot = flat.narrow(0, offset, parameters[i].numel());
    grad.defined() ? slot.copy_(grad.reshape({-1})) : slot.zero_();
    present.push_back(grad.defined() ? 1 : 0);
    offset += parameters[i].numel();
  }
  const std::int64_t members = static_cast<std::int64_t>(bucket.members.size());
  flat.narrow(0, bucket.elements, members).copy_(torch::tensor(present, torch::kFloat64));
}

// The summed gradients divided by `world` back into the parameters that some rank had.
void unpack(const at::Tensor& flat, const std::vector<at::Tensor>& parameters, const TensorBucket& bucket, int world) {
  const std::int64_t members = static_cast<std::int64_t>(bucket.members.size());
  const at::Tensor present = flat.narrow(0, bucket.elements, members).to(torch::kFloat64).contiguous();
  std::int64_t offset = 0;
  for (std::size_t m = 0; m < bucket.members.size(); ++m) {
    const at::Tensor& parameter = parameters[bucket.members[m]];
    const std::int64_t count = parameter.numel();
    if (present.data_ptr<double>()[m] > 0) {
      at::Tensor& grad = parameter.mutable_grad();
      if (!grad.defined()) grad = torch::empty_like(parameter);
      torch::div_out(grad, flat.narrow(0, offset, count).view_as(parameter), world);
    }
    offset += count;
  }
}

}  // namespace

GradientAverager::GradientAverager(ProcessGroup& group, std::size_t bucket_bytes)
    : group_(&group), bucket_bytes_(bucket_bytes), buffers_(std::make_shared<Buffers>()) {}

void GradientAverager::operator()(const std::vector<at::Tensor>& parameters) const {
  if (group_->single()) return;
  torch::NoGradGuard no_grad;
  std::vector<at::Tensor> trainable;
  for (const at::Tensor& parameter : parameters) {
    trainable.push_back(parameter.requires_grad() ? parameter : at::Tensor());
  }
  Buffers& buffers = *buffers_;
  const std::vector<std::int64_t> shape = trainable_shape(parameters);
  if (shape != buffers.shape) {  // first step, or parameters were frozen or unfrozen
    buffers.shape = shape;
    buffers.buckets = plan_buckets(trainable, bucket_bytes_);
    buffers.flats.clear();
    for (const TensorBucket& bucket : buffers.buckets) {
      const std::int64_t members = static_cast<std::int64_t>(bucket.members.size());
      buffers.flats.push_back(torch::empty({bucket.elements + members}, trainable[bucket.members.front()].options()));
    }
  }
  for (std::size_t b = 0; b < buffers.buckets.size(); ++b) {
    pack(trainable, buffers.buckets[b], buffers.flats[b]);
    group_->sum(buffers.flats[b], "gradient all-reduce");
    unpack(buffers.flats[b], trainable, buffers.buckets[b], group_->world());
  }
}

std::function<void(const std::vector<at::Tensor>&)> make_gradient_sync(ProcessGroup& group, std::size_t bucket_bytes) {
  if (group.single()) return {};
  return GradientAverager(group, bucket_bytes);
}

}  // namespace tinct
