// What a training loop does differently when it is one process of a data-parallel job,
// in one place so both loops read the same: every process starts from rank 0's model,
// the loss of its part of the global batch is scaled so averaged gradients equal one
// process's over the whole batch, gradients are averaged after backward, the logged loss
// and validation sums cover every process, and rank 0 alone writes. For one process
// (the default) every call returns its input or does nothing, at no cost.
#pragma once

#include <torch/torch.h>

#include <memory>
#include <string>
#include <vector>

#include "distributed/distributed_settings.hpp"
#include "distributed/process_group.hpp"
#include "training/train_step.hpp"

namespace tinct {

class DataParallel {
 public:
  DataParallel();  // one process
  // Joins the job at `place`: blocks until every process has arrived (settings.timeout_seconds).
  DataParallel(const Rendezvous& place, const DistributedSettings& settings);

  ProcessGroup& group() { return *group_; }
  bool single() const { return group_->single(); }
  int rank() const { return group_->rank(); }
  int world() const { return group_->world(); }
  bool is_writer() const { return group_->is_writer(); }

  // Before the first step, after a checkpoint is loaded: rank 0's parameters and buffers on
  // every process, and batch-norm statistics over the global batch when configured.
  void prepare(torch::nn::Module& model);
  // The train step's hooks: gradients averaged over processes; the job's loss.
  GradientSync gradient_sync();
  LossAgreement loss_agreement();
  // This process's part of a loss that is a mean over the global batch: `local_mean` is the
  // mean over `local_count` items (pixels, summed class weights) of this process's part.
  torch::Tensor global_mean(const torch::Tensor& local_mean, double local_count);
  // Before validation and checkpoints: with local batch norm each process's running
  // statistics differ; they are averaged so that every process holds the one model saved.
  void agree_buffers(torch::nn::Module& model);
  // Element-wise sums over processes (validation sums, confusion counts), in place.
  void sum(std::vector<double>& values, const std::string& what);

 private:
  std::unique_ptr<ProcessGroup> group_;
  DistributedSettings settings_;
};

}  // namespace tinct
