// The gradient-sync hook of data-parallel training: after backward, every trainable
// parameter's gradient is replaced by its mean over ranks, all-reduced in flat buckets.
// A parameter without a gradient on some rank (not reached by its batch) counts as zero
// there; one without a gradient on every rank keeps none, on every rank, so the optimizer
// treats it alike everywhere. Frozen parameters (requires_grad false) are not sent.
#pragma once

#include <cstddef>
#include <functional>
#include <memory>
#include <vector>

namespace at {
class Tensor;
}

namespace tinct {

class ProcessGroup;

class GradientAverager {
 public:
  GradientAverager(ProcessGroup& group, std::size_t bucket_bytes);

  // Every rank calls it at the same point of the same step, with the same parameter list.
  void operator()(const std::vector<at::Tensor>& parameters) const;

 private:
  struct Buffers;  // the bucket plan and its flat tensors, kept from step to step
  ProcessGroup* group_;
  std::size_t bucket_bytes_;
  std::shared_ptr<Buffers> buffers_;  // shared by copies (a std::function holds one)
};

// The hook for a training step: empty for a single process (nothing to do, no cost).
std::function<void(const std::vector<at::Tensor>&)> make_gradient_sync(ProcessGroup& group, std::size_t bucket_bytes);

}  // namespace tinct
