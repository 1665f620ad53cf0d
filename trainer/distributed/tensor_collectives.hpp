// Collectives over a module's whole state, bucketed: rank 0's parameters and buffers
// copied to every rank (all start identical), and floating tensors averaged over ranks
// (batch-norm running statistics kept per rank, made one before validation or a checkpoint).
#pragma once

#include <cstddef>
#include <vector>

namespace at {
class Tensor;
}

namespace tinct {

class ProcessGroup;

// Every tensor (any type) set to rank 0's values, in place.
void broadcast_tensors(ProcessGroup& group, const std::vector<at::Tensor>& tensors, std::size_t bucket_bytes);

// Floating tensors replaced by their mean over ranks, in place; integer tensors (counters such
// as num_batches_tracked) are left as they are.
void average_tensors(ProcessGroup& group, const std::vector<at::Tensor>& tensors, std::size_t bucket_bytes);

}  // namespace tinct
