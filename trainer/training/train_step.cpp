#include "training/train_step.hpp"

#include <cmath>

#include "runs/checkpoint.hpp"
#include "training/run_lifecycle.hpp"
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
  const std::string stopped = command + ": the loss is not finite at " + where + "; training stopped. ";
  if (last) {
    fail_runtime(stopped + "Lower train.lr in the config and run the same command with --resume: it continues from " +
                 last->string() + " at the new rate (on --resume " + rate_keys_text() +
                 " may change, and run.yaml records the change). If a lower rate does not help, check the stores "
                 "for extreme values, or start over with train.clip_norm on (--force)");
  }
  fail_runtime(stopped + "No checkpoint was written yet, so --resume has nothing to continue from: lower train.lr "
               "(and turn train.clip_norm on) and start over with --force, or choose another output; or check the "
               "stores for extreme values");
}

}  // namespace tinct
