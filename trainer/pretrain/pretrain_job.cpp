#include "pretrain/pretrain_job.hpp"

#include <torch/torch.h>

#include <chrono>
#include <cmath>
#include <cstdio>

#include "batches/batch_loader.hpp"
#include "batches/spatial_holdout.hpp"
#include "distributed/shard.hpp"
#include "models/colourisation_model.hpp"
#include "pretrain/colour_objective.hpp"
#include "pretrain/colour_preview.hpp"
#include "pretrain/colour_validation.hpp"
#include "runs/checkpoint.hpp"
#include "runs/encoder_artifact.hpp"
#include "runs/metrics_log.hpp"
#include "runs/thread_pinning.hpp"
#include "training/lr_schedule.hpp"
#include "training/data_parallel.hpp"
#include "training/optimizer.hpp"
#include "training/precision.hpp"
#include "training/run_lifecycle.hpp"
#include "training/train_step.hpp"
#include "util/error.hpp"
#include "util/log.hpp"
#include "util/progress.hpp"

namespace tinct {
namespace {

const std::vector<std::string> kMetricColumns{"step", "epoch", "loss", "lr", "chips_per_s",
                                              "val_loss", "val_delta_e", "baseline_delta_e"};

std::int64_t total_steps(const PretrainConfig& c, std::size_t training_chips) {
  if (c.steps > 0) return c.steps;
  return std::max<std::int64_t>(1, static_cast<std::int64_t>(std::ceil(c.epochs * training_chips / c.train.batch)));
}

// The step's forward: chips in channels-last layout (oneDNN's convolutions run faster on it:
// scripts/bench.sh, training-step options), in the run's precision; the prediction comes
// back as contiguous fp32 for the loss.
torch::Tensor training_forward(ColourisationModel& model, const torch::Tensor& bands, const PrecisionChoice& precision) {
  const ForwardPrecision scope(precision);
  return model->forward(bands.contiguous(torch::MemoryFormat::ChannelsLast)).to(torch::kFloat).contiguous();
}

bool due(std::int64_t done, std::int64_t every, std::int64_t total) {
  return done == total || (every > 0 && done % every == 0);
}

std::vector<ChipRef> first(const std::vector<ChipRef>& chips, std::size_t count) {
  return {chips.begin(), chips.begin() + static_cast<long>(std::min(count, chips.size()))};
}

// Everything the loop touches, built once.
struct Training {
  const PretrainConfig& config;
  RunLifecycle& run;
  DataParallel& parallel;
  PrecisionChoice precision;
  ChipCollection chips;
  ChipSplit split;
  ColourisationModel model;
  GroupedOptimizer optimizer;
  std::int64_t total = 0;
  std::int64_t start = 0;

  Training(const PretrainConfig& c, RunLifecycle& r, DataParallel& p, PrecisionChoice precision_)
      : config(c),
        run(r),
        parallel(p),
        precision(std::move(precision_)),
        chips(c.stores),
        split(hold_out_blocks(chips, c.validation.fraction, c.train.seed)),
        model(nullptr) {
    torch::manual_seed(c.train.seed);
    model = ColourisationModel(c.model);
    optimizer = make_optimizer({{model->parameters(), 1.0}}, c.train);
    total = total_steps(c, split.train.size());
  }
};

void save_state(Training& t, std::int64_t done, const MetricsLog& metrics) {
  t.parallel.agree_buffers(*t.model);
  if (!t.run.is_writer()) return;
  const auto folder = t.run.folder().file("checkpoints");
  save_checkpoint(checkpoint_path(folder, done), *t.model, *t.optimizer.optimizer,
                  {done, model_spec_yaml(t.config.model), t.run.config_hash(), {}});
  prune_checkpoints(folder, t.config.checkpoints.keep);
  metrics.flush();
}

void save_encoder_artifact(Training& t) {
  if (!t.run.is_writer()) return;
  save_encoder(t.run.folder().file("encoder.pt"), *t.model->encoder,
               {t.config.model, t.chips.normalisation(), t.chips.chip_size()}, t.model->decoder.get());
}

void write_preview(Training& t, const ColourObjective& objective, const PreviewCaption& caption) {
  if (t.config.validation.previews == 0 || !t.run.is_writer()) return;
  const auto chips = preview_chips(t.chips, t.split.validation, t.config.validation.previews);
  const Batch batch = assemble_batch(t.chips, chips, std::vector<int>(chips.size(), 0));
  torch::InferenceMode inference;
  t.model->eval();
  const torch::Tensor predicted = objective.predicted_lab(t.model->forward(batch.bands));
  t.model->train();
  char name[64];
  std::snprintf(name, sizeof(name), "step-%08lld.png", static_cast<long long>(caption.step));
  std::filesystem::create_directories(t.run.folder().file("previews"));
  write_colour_preview(t.run.folder().file("previews") / name, batch.colour, predicted, caption);
}

std::string format(const char* pattern, double value) {
  char text[64];
  std::snprintf(text, sizeof(text), pattern, value);
  return text;
}

// This process's share of the validation chips, its pixel-weighted means combined with the
// other processes' into those of the whole set.
ColourValidation validate_all(Training& t, const ColourObjective& objective, const std::vector<ChipRef>& chips,
                              const torch::Tensor& mean_colour) {
  t.parallel.agree_buffers(*t.model);
  const ShardRange part = shard_range(static_cast<std::int64_t>(chips.size()), t.parallel.rank(), t.parallel.world());
  const std::vector<ChipRef> mine(chips.begin() + part.begin, chips.begin() + part.end);
  const auto forward = [&](const torch::Tensor& x) { return t.model->forward(x); };
  ColourValidation v = validate_colour(*t.model, forward, objective, t.chips, mine, t.config.train.batch, mean_colour);
  if (t.parallel.single()) return v;
  std::vector<double> sums{v.loss * v.pixels, v.delta_e * v.pixels, v.baseline_delta_e * v.pixels, v.pixels};
  t.parallel.sum(sums, "validation sums");
  if (sums[3] == 0) return {};
  return {sums[0] / sums[3], sums[1] / sums[3], sums[2] / sums[3], sums[3]};
}

RunOutcome train(Training& t, const PretrainOptions& options) {
  const PretrainConfig& c = t.config;
  const ColourObjective objective(c.loss, t.chips, t.split.train);
  const torch::Tensor mean_colour = mean_training_colour(t.chips, t.split.train);
  const auto validation_chips = first(t.split.validation, static_cast<std::size_t>(c.validation.chips));
  MetricsLog metrics(t.run.file("metrics.csv"), kMetricColumns);
  if (t.start > 0) metrics.resume(t.start);
  LoaderSettings loading{c.train.batch, c.train.seed, c.train.augment, t.start};
  loading.rank = t.parallel.rank();
  loading.world = t.parallel.world();
  BatchLoader loader(t.chips, t.split.train, loading);
  // After the loader's thread starts (it keeps every core); ranks on one machine would pin onto the same cores.
  log::info(t.parallel.single() ? pin_compute_threads() : "compute threads not pinned: several processes train");
  const LearningRateSchedule schedule = warmup_cosine(c.train, t.total);
  TrainStep train_step(*t.model, *t.optimizer.optimizer, c.train.clip_norm, t.parallel.gradient_sync(),
                       t.parallel.loss_agreement());
  const std::int64_t stop = options.stop_after > 0 ? std::min(options.stop_after, t.total) : t.total;
  Progress progress("pretrain", t.total, "steps");
  const auto started = std::chrono::steady_clock::now();
  auto since = started;
  std::int64_t chips_since = 0;

  for (std::int64_t step = t.start; step < stop; ++step) {
    const Batch batch = loader.next();
    const double lr = schedule.at(step);
    t.optimizer.set_learning_rate(lr);
    const StepResult result = train_step.run([&] {
      // (B, C, H, W) -> (B, 3 or 1+Q, H, W)
      const torch::Tensor prediction = training_forward(t.model, batch.bands, t.precision);
      return t.parallel.global_mean(objective.loss(prediction, batch), batch.valid.sum().item<double>());
    });
    if (!result.finite) fail_non_finite("pretrain", "step " + std::to_string(step + 1), t.run.file("checkpoints"));

    const std::int64_t done = step + 1;
    const bool interrupted = t.run.stop_requested();
    chips_since += c.train.batch;  // the global batch, over every process
    const double elapsed = std::chrono::duration<double>(std::chrono::steady_clock::now() - started).count();
    progress.update(done, "loss " + format("%.4f", result.loss) + ", " +
                              format("%.1f", (done - t.start) * c.train.batch / std::max(elapsed, 1e-9)) + " chips/s");
    const bool validate = due(done, c.validation.every, t.total);
    if (done % c.log_every == 0 || validate || done == stop) {
      const double seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - since).count();
      std::vector<std::string> row{std::to_string(done), std::to_string(loader.epoch_of(step)),
                                   metric_text(result.loss), metric_text(lr),
                                   format("%.1f", chips_since / std::max(seconds, 1e-9)), "", "", ""};
      since = std::chrono::steady_clock::now();
      chips_since = 0;
      if (validate) {
        const ColourValidation v = validate_all(t, objective, validation_chips, mean_colour);
        row[5] = metric_text(v.loss);
        row[6] = metric_text(v.delta_e);
        row[7] = metric_text(v.baseline_delta_e);
        log::info("step " + std::to_string(done) + ": validation loss " + format("%.4f", v.loss) + ", delta E " +
                  format("%.2f", v.delta_e) + " (mean-colour baseline " + format("%.2f", v.baseline_delta_e) + ")");
        write_preview(t, objective, {done, v.delta_e, v.baseline_delta_e});
      }
      metrics.add(row);
    }
    if (validate || due(done, c.checkpoints.every, t.total) || done == stop || interrupted) {
      save_state(t, done, metrics);
    }
    if (interrupted) return t.run.interrupted_after("step " + std::to_string(done));
  }
  progress.finish();
  if (stop < t.total) return {RunStatus::stopped, "stopped after step " + std::to_string(stop) + "; --resume continues"};
  return {};
}

std::int64_t restore(Training& t) {
  const auto last = latest_checkpoint(t.run.file("checkpoints"));
  if (!last) fail_usage("--resume: " + t.run.path().string() + " holds no checkpoint to continue from");
  if (read_checkpoint_info(*last).model_spec_yaml != model_spec_yaml(t.config.model)) {
    fail_usage("--resume: the model in the config differs from the run's; continue with the same config");
  }
  const CheckpointInfo info = load_checkpoint(*last, *t.model, *t.optimizer.optimizer);
  log::info("pretrain: resuming from " + last->string() + " (step " + std::to_string(info.step) + ")");
  return info.step;
}

void log_split(const Training& t) {
  log::info("pretrain: " + std::to_string(t.split.train.size()) + " training chips in " +
            std::to_string(t.split.train_blocks) + " blocks, " + std::to_string(t.split.validation.size()) +
            " validation chips in " + std::to_string(t.split.validation_blocks) + " held-out blocks; " +
            std::to_string(t.total) + " steps of " + std::to_string(t.config.train.batch));
}

}  // namespace

void run_pretrain(const PretrainConfig& config, const PretrainOptions& options) {
  DataParallel one_process;
  DataParallel& parallel = options.parallel ? *options.parallel : one_process;
  const PrecisionChoice precision = choose_precision(config.precision);
  RunLifecycle run({"pretrain", config.output, options.force, options.resume, options.resolved_config,
                    config.train.seed, parallel.single() ? nullptr : &parallel.group(), precision});
  run.execute([&] {
    log::info("pretrain: " + precision.used + " arithmetic (" + precision.why + ")");
    Training training(config, run, parallel, precision);
    if (options.resume) training.start = restore(training);
    parallel.prepare(*training.model);
    log_split(training);
    const RunOutcome outcome = train(training, options);
    if (outcome.status != RunStatus::interrupted) save_encoder_artifact(training);
    return outcome;
  });
}

}  // namespace tinct
