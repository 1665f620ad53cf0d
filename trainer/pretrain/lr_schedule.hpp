// The learning-rate schedule of training: linear warm-up to the base rate, then a cosine
// decay to the minimum rate, and applying a rate to every parameter group of an optimizer
// (with per-group scales, e.g. a smaller rate for a pretrained encoder).
// The optimizer itself and gradient clipping (torch::nn::utils::clip_grad_norm_) are
// set up by the training loop.
#pragma once

#include <torch/torch.h>

#include <cstdint>
#include <vector>

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

// Sets group i's rate to lr * group_scales[i]; an empty group_scales means 1 for every group.
// Works for any LibTorch optimizer whose options implement set_lr (AdamW, Adam, SGD, ...).
void set_learning_rate(torch::optim::Optimizer& optimizer, double lr,
                       const std::vector<double>& group_scales = {});

}  // namespace tinct
