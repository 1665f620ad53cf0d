// A loss whose denominator depends on the data (valid pixels of a colour loss, the summed
// class weights of a weighted cross-entropy) made data-parallel: each rank returns its
// share local_sum * world / global_count, so the gradients averaged over ranks are exactly
// those of global_sum / global_count, one process's loss over the whole global batch.
// A mean of per-rank means would weight each rank alike whatever its count.
#pragma once

namespace at {
class Tensor;
}

namespace tinct {

class ProcessGroup;

// local_sum: this rank's summed loss (a scalar with its graph); local_count: its
// denominator. One small all-reduce (skipped for a single process, which gets
// local_sum / local_count). A zero global count gives a zero loss.
at::Tensor global_mean_loss(ProcessGroup& group, const at::Tensor& local_sum, double local_count);

}  // namespace tinct
