// The warm-up and cosine formulas of lr_schedule.hpp, with the schedule's inputs checked on
// every call (cheap, and a bad config fails at step 0 rather than mid-run).
#include "training/lr_schedule.hpp"

#include <algorithm>
#include <cmath>
#include <string>

#include "util/error.hpp"

namespace tinct {
namespace {

constexpr double kPi = 3.14159265358979323846;

void check_schedule(std::int64_t step, std::int64_t total_steps, std::int64_t warmup_steps,
                    double base_lr, double min_lr) {
  if (total_steps < 1 || warmup_steps < 0 || warmup_steps >= total_steps) {
    fail_usage("learning-rate schedule: warm-up steps (" + std::to_string(warmup_steps) +
               ") must be >= 0 and fewer than the total steps (" + std::to_string(total_steps) +
               "); shorten the warm-up or train for more epochs");
  }
  if (!(base_lr > 0) || !(min_lr >= 0) || min_lr > base_lr) {
    fail_usage("learning-rate schedule: need 0 <= min_lr <= base_lr and base_lr > 0 (got " +
               std::to_string(min_lr) + " and " + std::to_string(base_lr) + ")");
  }
  if (step < 0) {
    fail_usage("learning-rate schedule: step must be >= 0, got " + std::to_string(step));
  }
}

}  // namespace

double learning_rate_at(std::int64_t step, std::int64_t total_steps, std::int64_t warmup_steps,
                        double base_lr, double min_lr) {
  check_schedule(step, total_steps, warmup_steps, base_lr, min_lr);
  if (step < warmup_steps) {
    return base_lr * static_cast<double>(step + 1) / static_cast<double>(warmup_steps);
  }
  const double progress = std::min(1.0, static_cast<double>(step - warmup_steps) /
                                            static_cast<double>(total_steps - warmup_steps));
  return min_lr + (base_lr - min_lr) * 0.5 * (1.0 + std::cos(kPi * progress));
}

LearningRateSchedule warmup_cosine(const TrainSettings& settings, std::int64_t total_steps) {
  LearningRateSchedule schedule{total_steps, std::min(settings.warmup, total_steps - 1), settings.lr, settings.min_lr};
  check_schedule(0, schedule.total_steps, schedule.warmup_steps, schedule.base_lr, schedule.min_lr);
  return schedule;
}

void set_learning_rate(torch::optim::Optimizer& optimizer, double lr,
                       const std::vector<double>& group_scales) {
  auto& groups = optimizer.param_groups();
  TORCH_CHECK(group_scales.empty() || group_scales.size() == groups.size(), "learning rate: ",
              group_scales.size(), " group scales given for ", groups.size(), " parameter groups");
  for (std::size_t i = 0; i < groups.size(); ++i) {
    const double scale = group_scales.empty() ? 1.0 : group_scales[i];
    groups[i].options().set_lr(lr * scale);  // virtual: AdamWOptions, SGDOptions, ...
  }
}

}  // namespace tinct
