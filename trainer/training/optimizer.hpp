// The optimiser of both training loops, built over parameter groups that each learn at
// a scale of the scheduled rate (fine-tuning: the encoder at encoder_lr_scale, the head
// at 1). AdamW, or SGD with the configured momentum; weight decay from the settings.
#pragma once

#include <torch/torch.h>

#include <memory>
#include <vector>

#include "training/train_settings.hpp"

namespace tinct {

struct ParameterGroup {
  std::vector<torch::Tensor> parameters;
  double lr_scale = 1.0;
};

struct GroupedOptimizer {
  std::unique_ptr<torch::optim::Optimizer> optimizer;
  std::vector<double> lr_scales;  // one per group, in group order

  // Sets every group's rate to lr times its scale.
  void set_learning_rate(double lr);
};

// Group rates start at settings.lr times their scale.
GroupedOptimizer make_optimizer(const std::vector<ParameterGroup>& groups, const TrainSettings& settings);

}  // namespace tinct
