#include "training/data_parallel.hpp"

#include "distributed/global_mean_loss.hpp"
#include "distributed/gradient_averager.hpp"
#include "distributed/tensor_collectives.hpp"
#include "models/batch_norm.hpp"

namespace tinct {
namespace {

std::vector<at::Tensor> state_of(torch::nn::Module& model) {
  std::vector<at::Tensor> tensors;
  for (const auto& parameter : model.parameters()) tensors.push_back(parameter);
  for (const auto& buffer : model.buffers()) tensors.push_back(buffer);
  return tensors;
}

}  // namespace

DataParallel::DataParallel() : group_(std::make_unique<ProcessGroup>()) {}

DataParallel::DataParallel(const Rendezvous& place, const DistributedSettings& settings)
    : group_(std::make_unique<ProcessGroup>(place, settings)), settings_(settings) {}

void DataParallel::prepare(torch::nn::Module& model) {
  if (single()) return;
  torch::NoGradGuard no_grad;
  broadcast_tensors(*group_, state_of(model), settings_.bucket_bytes);
  if (settings_.sync_batch_norm) {
    ProcessGroup* group = group_.get();
    synchronise_batch_norm(model, [group](at::Tensor& tensor) {
      group->sum(tensor, "batch-norm statistics (distributed.batch_norm: sync)");
    });
  }
}

GradientSync DataParallel::gradient_sync() { return make_gradient_sync(*group_, settings_.bucket_bytes); }

LossAgreement DataParallel::loss_agreement() {
  if (single()) return {};
  ProcessGroup* group = group_.get();
  // A non-finite share anywhere makes the sum non-finite everywhere: every process stops alike.
  return [group](double share) {
    std::vector<double> total{share};
    group->sum(total, "loss all-reduce");
    return total[0] / group->world();
  };
}

torch::Tensor DataParallel::global_mean(const torch::Tensor& local_mean, double local_count) {
  if (single()) return local_mean;
  return global_mean_loss(*group_, local_mean * local_count, local_count);
}

void DataParallel::agree_buffers(torch::nn::Module& model) {
  if (single() || settings_.sync_batch_norm) return;
  torch::NoGradGuard no_grad;
  std::vector<at::Tensor> buffers;
  for (const auto& buffer : model.buffers()) buffers.push_back(buffer);
  average_tensors(*group_, buffers, settings_.bucket_bytes);
}

void DataParallel::sum(std::vector<double>& values, const std::string& what) { group_->sum(values, what); }

}  // namespace tinct
