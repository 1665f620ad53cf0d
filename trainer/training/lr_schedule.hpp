// The learning-rate schedule of both training loops, per step: linear warm-up to the
// base rate, then a cosine decay to the minimum rate; and applying a rate to every
// parameter group of an optimizer (with per-group scales, e.g. a smaller rate for a
// pretrained encoder). The optimizer is built in optimizer.hpp, clipping is in the step.
#pragma once

#include <torch/torch.h>

#include <cstdint>
#include <vector>

#include "training/train_settings.hpp"

namespace tinct {

// Rate for the 0-based `step`:
//   step < warmup_steps:  base_lr * (step + 1) / warmup_steps  (the last warm-up step is at base)
//   afterwards:           min_lr + (base_lr - min_lr) * 0.5 * (1 + cos(pi * progress)),
//                         progress = (step - warmup_steps) / (total_steps - warmup_steps),
// so the first step after warm-up is at base_lr, the midpoint at (base_lr + min_lr) / 2,
// and step == total_steps (one past the last step) at min_lr; later steps stay at min_lr.
// Fails (usage) unless 0 <= warmup_steps < total_steps, 0 <= min_lr <= base_lr, step >= 0.
double learning_rate_at(std::int64_t step, std::int64_t total_steps, std::int64_t warmup_steps,
                        double base_lr, double min_lr);

// The schedule of one run (warmup_cosine builds it from the train settings).
struct LearningRateSchedule {
  std::int64_t total_steps = 1;
  std::int64_t warmup_steps = 0;
  double base_lr = 1e-3;
  double min_lr = 0;

  double at(std::int64_t step) const {
    return learning_rate_at(step, total_steps, warmup_steps, base_lr, min_lr);
  }
};

// From train.lr, train.min_lr and train.warmup over `total_steps`; a warm-up as long as
// the run or longer is shortened to total_steps - 1, so short runs still reach the base rate.
LearningRateSchedule warmup_cosine(const TrainSettings& settings, std::int64_t total_steps);

// Sets group i's rate to lr * group_scales[i]; an empty group_scales means 1 for every group.
// Works for any LibTorch optimizer whose options implement set_lr (AdamW, Adam, SGD, ...).
void set_learning_rate(torch::optim::Optimizer& optimizer, double lr,
                       const std::vector<double>& group_scales = {});

}  // namespace tinct
