#include "pretrain/pretrain_job.hpp"

#include <torch/torch.h>

#include <chrono>
#include <cmath>
#include <cstdio>

#include "batches/batch_loader.hpp"
#include "batches/spatial_holdout.hpp"
#include "models/colourisation_model.hpp"
#include "pretrain/colour_objective.hpp"
#include "pretrain/colour_preview.hpp"
#include "pretrain/colour_validation.hpp"
#include "pretrain/lr_schedule.hpp"
#include "runs/checkpoint.hpp"
#include "runs/encoder_artifact.hpp"
#include "runs/metrics_log.hpp"
#include "runs/run_folder.hpp"
#include "util/error.hpp"
#include "util/log.hpp"
#include "util/progress.hpp"
#include "util/sha256.hpp"

namespace tinct {
namespace {

const std::vector<std::string> kMetricColumns{"step", "epoch", "loss", "lr", "chips_per_s",
                                              "val_loss", "val_delta_e", "baseline_delta_e"};

std::unique_ptr<torch::optim::Optimizer> make_optimizer(torch::nn::Module& model, const TrainSettings& t) {
  if (t.optimizer == "sgd") {
    return std::make_unique<torch::optim::SGD>(
        model.parameters(), torch::optim::SGDOptions(t.lr).momentum(t.momentum).weight_decay(t.weight_decay));
  }
  return std::make_unique<torch::optim::AdamW>(model.parameters(),
                                               torch::optim::AdamWOptions(t.lr).weight_decay(t.weight_decay));
}

std::int64_t total_steps(const TrainSettings& t, std::size_t training_chips) {
  if (t.steps > 0) return t.steps;
  return std::max<std::int64_t>(1, static_cast<std::int64_t>(std::ceil(t.epochs * training_chips / t.batch)));
}

bool due(std::int64_t done, std::int64_t every, std::int64_t total) {
  return done == total || (every > 0 && done % every == 0);
}

std::vector<ChipRef> first(const std::vector<ChipRef>& chips, std::size_t count) {
  return {chips.begin(), chips.begin() + static_cast<long>(std::min(count, chips.size()))};
}

[[noreturn]] void fail_non_finite(std::int64_t step, const RunFolder& run) {
  const auto last = latest_checkpoint(run.file("checkpoints"));
  fail_runtime("pretrain: the loss is not finite at step " + std::to_string(step + 1) +
               "; training stopped. The last good checkpoint is " +
               (last ? last->string() : std::string("none (no checkpoint was written yet)")) +
               ". Lower train.lr, keep train.clip_norm on, or check the stores for extreme values, then "
               "continue with --resume");
}

// Everything the loop touches, built once.
struct Training {
  const PretrainConfig& config;
  RunFolder& run;
  ChipCollection chips;
  ChipSplit split;
  ColourisationModel model;
  std::unique_ptr<torch::optim::Optimizer> optimizer;
  std::int64_t total = 0;
  std::int64_t start = 0;
  std::string config_hash;

  Training(const PretrainConfig& c, RunFolder& r)
      : config(c),
        run(r),
        chips(c.stores),
        split(hold_out_blocks(chips, c.validation.fraction, c.train.seed)),
        model(nullptr) {
    torch::manual_seed(c.train.seed);
    model = ColourisationModel(c.model);
    optimizer = make_optimizer(*model, c.train);
    total = total_steps(c.train, split.train.size());
  }
};

void save_state(Training& t, std::int64_t done) {
  const auto folder = t.run.file("checkpoints");
  save_checkpoint(checkpoint_path(folder, done), *t.model, *t.optimizer,
                  {done, model_spec_yaml(t.config.model), t.config_hash});
  prune_checkpoints(folder, t.config.checkpoints.keep);
}

void save_encoder_artifact(Training& t) {
  save_encoder(t.run.file("encoder.pt"), *t.model->encoder,
               {model_spec_yaml(t.config.model), t.chips.normalisation(), t.chips.chip_size()});
}

void write_preview(Training& t, const ColourObjective& objective, const PreviewCaption& caption) {
  if (t.config.validation.previews == 0) return;
  const auto chips = preview_chips(t.chips, t.split.validation, t.config.validation.previews);
  const Batch batch = assemble_batch(t.chips, chips, std::vector<int>(chips.size(), 0));
  torch::InferenceMode inference;
  t.model->eval();
  const torch::Tensor predicted = objective.predicted_lab(t.model->forward(batch.bands));
  t.model->train();
  char name[64];
  std::snprintf(name, sizeof(name), "step-%08lld.png", static_cast<long long>(caption.step));
  std::filesystem::create_directories(t.run.file("previews"));
  write_colour_preview(t.run.file("previews") / name, batch.colour, predicted, caption);
}

std::string format(const char* pattern, double value) {
  char text[64];
  std::snprintf(text, sizeof(text), pattern, value);
  return text;
}

void train(Training& t, const PretrainOptions& options) {
  const PretrainConfig& c = t.config;
  const ColourObjective objective(c.loss, t.chips, t.split.train);
  const torch::Tensor mean_colour = mean_training_colour(t.chips, t.split.train);
  const auto validation_chips = first(t.split.validation, static_cast<std::size_t>(c.validation.chips));
  MetricsLog metrics(t.run.file("metrics.csv"), kMetricColumns);
  if (t.start > 0) metrics.resume(t.start);
  BatchLoader loader(t.chips, t.split.train, {c.train.batch, c.train.seed, c.train.augment, t.start});
  const std::int64_t warmup = std::min(c.train.warmup, t.total - 1);
  const std::int64_t stop = options.stop_after > 0 ? std::min(options.stop_after, t.total) : t.total;
  const auto forward = [&](const torch::Tensor& x) { return t.model->forward(x); };
  Progress progress("pretrain", t.total, "steps");
  const auto started = std::chrono::steady_clock::now();
  auto since = started;
  std::int64_t chips_since = 0;
  double loss_value = 0;

  for (std::int64_t step = t.start; step < stop; ++step) {
    const Batch batch = loader.next();
    const double lr = learning_rate_at(step, t.total, warmup, c.train.lr, c.train.min_lr);
    set_learning_rate(*t.optimizer, lr, {});

    const torch::Tensor prediction = t.model->forward(batch.bands);  // (B, C, H, W) -> (B, 3 or 1+Q, H, W)
    const torch::Tensor loss = objective.loss(prediction, batch);
    loss_value = loss.item<double>();
    if (!std::isfinite(loss_value)) fail_non_finite(step, t.run);
    t.optimizer->zero_grad();
    loss.backward();
    if (c.train.clip_norm > 0) torch::nn::utils::clip_grad_norm_(t.model->parameters(), c.train.clip_norm);
    t.optimizer->step();

    const std::int64_t done = step + 1;
    chips_since += batch.bands.size(0);
    const double elapsed = std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();
    progress.update(done, "loss " + format("%.4f", loss_value) + ", " +
                              format("%.1f", (done - t.start) * c.train.batch / std::max(elapsed, 1e-9)) + " chips/s");
    const bool validate = due(done, c.validation.every, t.total);
    if (done % c.train.log_every != 0 && !validate && done != stop) continue;
    const double seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - since).count();
    std::vector<std::string> row{std::to_string(done), std::to_string(loader.epoch_of(step)), metric_text(loss_value),
                                 metric_text(lr), format("%.1f", chips_since / std::max(seconds, 1e-9)), "", "", ""};
    since = std::chrono::steady_clock::now();
    chips_since = 0;
    if (validate) {
      const ColourValidation v = validate_colour(*t.model, forward, objective, t.chips, validation_chips,
                                                 c.train.batch, mean_colour);
      row[5] = metric_text(v.loss);
      row[6] = metric_text(v.delta_e);
      row[7] = metric_text(v.baseline_delta_e);
      log::info("step " + std::to_string(done) + ": validation loss " + format("%.4f", v.loss) + ", delta E " +
                format("%.2f", v.delta_e) + " (mean-colour baseline " + format("%.2f", v.baseline_delta_e) + ")");
      write_preview(t, objective, {done, v.delta_e, v.baseline_delta_e});
    }
    metrics.add(row);
    if (validate || due(done, c.checkpoints.every, t.total) || done == stop) {
      save_state(t, done);
      metrics.flush();
    }
  }
  progress.finish();
  metrics.flush();
}

std::int64_t restore(Training& t) {
  const auto last = latest_checkpoint(t.run.file("checkpoints"));
  if (!last) fail_usage("--resume: " + t.run.path().string() + " holds no checkpoint to continue from");
  const CheckpointInfo info = load_checkpoint(*last, *t.model, *t.optimizer);
  if (info.model_spec_yaml != model_spec_yaml(t.config.model)) {
    fail_usage("--resume: the model in the config differs from the run's; continue with the same config");
  }
  log::info("pretrain: resuming from " + last->string() + " (step " + std::to_string(info.step) + ")");
  return info.step;
}

}  // namespace

void run_pretrain(const PretrainConfig& config, const PretrainOptions& options) {
  RunFolder run(config.output, {options.force, options.resume});
  const std::string hash = sha256_hex(options.resolved_config);
  if (options.resume && std::filesystem::exists(run.file("config.resolved.yaml")) &&
      sha256_file(run.file("config.resolved.yaml")) != hash) {
    fail_usage("--resume: the config differs from the one " + run.path().string() +
               " started with (config.resolved.yaml); resume with the same config, or start a new run");
  }
  run.write_config(options.resolved_config);
  run.write_status(RunStatus::running, static_cast<std::int64_t>(config.train.seed));
  try {
    Training training(config, run);
    training.config_hash = hash;
    if (options.resume) training.start = restore(training);
    log::info("pretrain: " + std::to_string(training.split.train.size()) + " training chips in " +
              std::to_string(training.split.train_blocks) + " blocks, " +
              std::to_string(training.split.validation.size()) + " validation chips in " +
              std::to_string(training.split.validation_blocks) + " held-out blocks; " +
              std::to_string(training.total) + " steps of " + std::to_string(config.train.batch));
    train(training, options);
    save_encoder_artifact(training);
    const bool finished = options.stop_after == 0 || options.stop_after >= training.total;
    run.write_status(finished ? RunStatus::done : RunStatus::stopped, static_cast<std::int64_t>(config.train.seed),
                     finished ? "" : "stopped after step " + std::to_string(options.stop_after) + "; --resume continues");
  } catch (...) {
    run.write_status(RunStatus::failed, static_cast<std::int64_t>(config.train.seed));
    throw;
  }
}

}  // namespace tinct
