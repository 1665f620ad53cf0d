#include "distributed/global_mean_loss.hpp"

#include <torch/torch.h>

#include <vector>

#include "distributed/process_group.hpp"

namespace tinct {

at::Tensor global_mean_loss(ProcessGroup& group, const at::Tensor& local_sum, double local_count) {
  std::vector<double> count{local_count};
  group.sum(count, "loss denominator all-reduce");
  if (count[0] <= 0) return local_sum * 0.0;
  return local_sum * (static_cast<double>(group.world()) / count[0]);
}

}  // namespace tinct
