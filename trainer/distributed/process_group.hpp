// The processes of one data-parallel job and the collectives the training loops use:
// element-wise sums (metrics, counts, gradients), broadcast from rank 0 and a barrier,
// on c10d's ProcessGroupGloo over a TCPStore that rank 0 hosts. A single process (world 1)
// opens nothing and every collective returns at once. A peer that stops or stays silent
// longer than the timeout becomes a runtime error naming this rank and what to do.
#pragma once

#include <memory>
#include <string>
#include <vector>

#include "distributed/distributed_settings.hpp"
#include "distributed/rendezvous.hpp"

namespace at {
class Tensor;
}

namespace tinct {

class ProcessGroup {
 public:
  ProcessGroup();  // one process
  // Joins the job: blocks until every rank has arrived, at most settings.timeout_seconds.
  ProcessGroup(const Rendezvous& place, const DistributedSettings& settings);
  ~ProcessGroup();
  ProcessGroup(const ProcessGroup&) = delete;
  ProcessGroup& operator=(const ProcessGroup&) = delete;

  int rank() const { return rank_; }
  int world() const { return world_; }
  bool single() const { return world_ == 1; }
  bool is_writer() const { return rank_ == 0; }  // writes checkpoints, metrics, previews

  // `what` names the operation in errors ("validation sums", "gradient all-reduce").
  // Element-wise sums over all ranks, in place; every rank passes the same length.
  void sum(std::vector<double>& values, const std::string& what);
  // Whether `value` is true on any rank (a stop request, a non-finite loss), so that every
  // rank takes the same branch.
  bool any(bool value, const std::string& what);
  // One contiguous tensor summed over all ranks, in place (same shape and type everywhere).
  void sum(at::Tensor& tensor, const std::string& what);
  // Rank 0's contents copied into this rank's tensor, in place.
  void broadcast(at::Tensor& tensor, const std::string& what);
  void barrier(const std::string& what);

 private:
  struct Gloo;
  std::unique_ptr<Gloo> gloo_;
  int rank_ = 0;
  int world_ = 1;
};

}  // namespace tinct
