// One optimisation step, the same for every training loop: the loop's forward and loss,
// a finite check, zero_grad, backward, the gradient-sync hook, clipping and the update.
// The loop around it still reads top to bottom: next batch, rate, step, log; validation
// and checkpoint blocks stay in the loop's own file.
#pragma once

#include <torch/torch.h>

#include <filesystem>
#include <functional>
#include <string>
#include <vector>

namespace tinct {

// Called with every parameter of the model after backward and before clipping (frozen
// ones have an undefined grad). Data-parallel training averages the gradients across
// processes here; an empty hook (one process) does nothing.
using GradientSync = std::function<void(const std::vector<torch::Tensor>& parameters)>;

// Called with this process's loss before backward; returns the job's (data-parallel: the
// mean over processes, non-finite when any is), so every process takes the same branch.
// An empty hook (one process) keeps the loss as it is.
using LossAgreement = std::function<double(double loss)>;

struct StepResult {
  double loss = 0;
  bool finite = true;  // false: nothing was updated; the caller stops the run
};

class TrainStep {
 public:
  // clip_norm 0: no clipping. The model and optimizer must outlive the step.
  TrainStep(torch::nn::Module& model, torch::optim::Optimizer& optimizer, double clip_norm,
            GradientSync sync = {}, LossAgreement agree = {});

  // forward_and_loss runs the model on the batch and returns its scalar loss.
  StepResult run(const std::function<torch::Tensor()>& forward_and_loss);

 private:
  torch::nn::Module& model_;
  torch::optim::Optimizer& optimizer_;
  double clip_norm_;
  GradientSync sync_;
  LossAgreement agree_;
};

// Fails (runtime) for a non-finite loss at `where` (e.g. "step 12"), naming the last
// good checkpoint in `checkpoints` and what to change before --resume.
[[noreturn]] void fail_non_finite(const std::string& command, const std::string& where,
                                  const std::filesystem::path& checkpoints);

}  // namespace tinct
