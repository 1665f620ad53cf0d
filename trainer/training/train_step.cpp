#include "training/train_step.hpp"

#include <cmath>

#include "runs/checkpoint.hpp"
#include "util/error.hpp"

namespace tinct {

TrainStep::TrainStep(torch::nn::Module& model, torch::optim::Optimizer& optimizer, double clip_norm,
                     GradientSync sync, LossAgreement agree)
    : model_(model),
      optimizer_(optimizer),
      clip_norm_(clip_norm),
      sync_(std::move(sync)),
      agree_(std::move(agree)) {}

StepResult TrainStep::run(const std::function<torch::Tensor()>& forward_and_loss) {
  const torch::Tensor loss = forward_and_loss();
  StepResult result;
  result.loss = loss.item<double>();
  if (agree_) result.loss = agree_(result.loss);
  result.finite = std::isfinite(result.loss);
  if (!result.finite) return result;
  optimizer_.zero_grad();
  loss.backward();
  const std::vector<torch::Tensor> parameters = model_.parameters();
  if (sync_) sync_(parameters);
  if (clip_norm_ > 0) torch::nn::utils::clip_grad_norm_(parameters, clip_norm_);
  optimizer_.step();
  return result;
}

void fail_non_finite(const std::string& command, const std::string& where, const std::filesystem::path& checkpoints) {
  const auto last = latest_checkpoint(checkpoints);
  fail_runtime(command + ": the loss is not finite at " + where + "; training stopped. The last good checkpoint is " +
               (last ? last->string() : std::string("none (no checkpoint was written yet)")) +
               ". Start the run again with a lower train.lr (and train.clip_norm on), or check the stores for "
               "extreme values: --force replaces this run, or choose another output; --resume continues only with "
               "the same config");
}

}  // namespace tinct
