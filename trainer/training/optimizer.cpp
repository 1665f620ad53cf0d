#include "training/optimizer.hpp"

#include "training/lr_schedule.hpp"

namespace tinct {
namespace {

std::unique_ptr<torch::optim::OptimizerOptions> group_options(const TrainSettings& t, double lr) {
  if (t.optimizer == "sgd") {
    return std::make_unique<torch::optim::SGDOptions>(
        torch::optim::SGDOptions(lr).momentum(t.momentum).weight_decay(t.weight_decay));
  }
  return std::make_unique<torch::optim::AdamWOptions>(torch::optim::AdamWOptions(lr).weight_decay(t.weight_decay));
}

}  // namespace

void GroupedOptimizer::set_learning_rate(double lr) { tinct::set_learning_rate(*optimizer, lr, lr_scales); }

GroupedOptimizer make_optimizer(const std::vector<ParameterGroup>& groups, const TrainSettings& t) {
  GroupedOptimizer result;
  std::vector<torch::optim::OptimizerParamGroup> torch_groups;
  for (const ParameterGroup& group : groups) {
    torch_groups.emplace_back(group.parameters, group_options(t, t.lr * group.lr_scale));
    result.lr_scales.push_back(group.lr_scale);
  }
  if (t.optimizer == "sgd") {
    result.optimizer = std::make_unique<torch::optim::SGD>(
        torch_groups, torch::optim::SGDOptions(t.lr).momentum(t.momentum).weight_decay(t.weight_decay));
  } else {
    result.optimizer = std::make_unique<torch::optim::AdamW>(
        torch_groups, torch::optim::AdamWOptions(t.lr).weight_decay(t.weight_decay));
  }
  return result;
}

}  // namespace tinct
