#include "finetune/finetune_job.hpp"

#include <torch/torch.h>

#include <cstdio>

#include "batches/batch_loader.hpp"
#include "inference/split_table.hpp"
#include "distributed/shard.hpp"
#include "finetune/probe_fit.hpp"
#include "runs/checkpoint.hpp"
#include "runs/classifier_artifact.hpp"
#include "runs/encoder_artifact.hpp"
#include "runs/metrics_log.hpp"
#include "training/data_parallel.hpp"
#include "training/lr_schedule.hpp"
#include "training/optimizer.hpp"
#include "training/run_lifecycle.hpp"
#include "training/train_step.hpp"
#include "util/atomic_file.hpp"
#include "util/error.hpp"
#include "util/log.hpp"

namespace tinct {
namespace {

const std::vector<std::string> kEpochColumns{"epoch", "loss", "lr", "encoder_frozen", "val_macro_f1",
                                             "val_accuracy"};
constexpr int kCheckpointsKept = 2;

// The labelled chips and how this run uses them.
struct FinetuneData {
  ChipCollection chips;
  ClassifierArtifact artifact;  // architecture, classes, input statistics
  LabelSplit split;             // train and validation within the label budget
  torch::Tensor class_weights;  // (K) float
  std::int64_t steps_per_epoch = 0;
};

// The model and what updates it.
struct Finetuning {
  ClassifierModel model{nullptr};
  GroupedOptimizer optimizer;
};

// Where the epoch loop is; saved in every checkpoint, so --resume continues exactly.
struct EpochState {
  std::int64_t step = 0;   // steps done
  int epochs_done = 0;     // epochs trained and validated
  double loss_sum = 0;     // training loss of the epoch in progress
  double best_f1 = -1;
  int best_epoch = 0;      // 1-based; model.pt holds its weights
  bool stopped_early = false;
};

struct EpochScore {
  double macro_f1 = 0;
  double accuracy = 0;
};

// ---- prepare split

// The architecture and input statistics: from the pretrain run, or the config.
ClassifierArtifact describe_classifier(const FinetuneConfig& c, ChipCollection& chips) {
  ClassifierArtifact artifact;
  artifact.classes = chips.classes();
  artifact.spec.classes = static_cast<int>(artifact.classes.size());
  artifact.spec.dropout = c.dropout;
  artifact.spec.hidden = c.hidden;
  artifact.spec.head = c.head;
  artifact.chip_size = chips.chip_size();
  if (!c.init.pretrain_run.empty()) {
    const EncoderArtifact encoder = read_encoder_artifact(c.init.pretrain_run / "encoder.pt");
    if (encoder.chip_size != chips.chip_size()) {
      fail_usage("the label store's chips are " + std::to_string(chips.chip_size()) + " px but the encoder was " +
                 "pretrained on " + std::to_string(encoder.chip_size) + " px chips; make the label store with " +
                 "chips.size " + std::to_string(encoder.chip_size));
    }
    chips.use_normalisation(encoder.normalisation);
    artifact.spec.model = encoder.model;
  } else {
    artifact.spec.model = c.init.model;
  }
  artifact.normalisation = chips.normalisation();
  return artifact;
}

torch::Tensor class_weights(const FinetuneConfig& c, const ChipCollection& chips, const std::vector<ChipRef>& train) {
  const auto k = static_cast<long>(chips.classes().size());
  if (c.class_weights == "none") return torch::ones({k});
  if (c.class_weights == "explicit") {
    if (static_cast<long>(c.explicit_weights.size()) != k) {
      fail_usage("classes.weights lists " + std::to_string(c.explicit_weights.size()) + " weights for " +
                 std::to_string(k) + " classes");
    }
    return torch::tensor(c.explicit_weights, torch::kFloat64).to(torch::kFloat32);
  }
  std::vector<double> counts(static_cast<std::size_t>(k), 0.0);
  for (const ChipRef& ref : train) counts[static_cast<std::size_t>(chips.class_of(ref))] += 1;
  std::vector<float> weights;
  for (double n : counts) weights.push_back(n > 0 ? static_cast<float>(train.size() / (k * n)) : 0.0f);
  return torch::tensor(weights);
}

void log_split(const LabelSplit& split, int fold) {
  log::info("finetune: " + std::to_string(split.units) + " split units; fold " + std::to_string(fold) + ": " +
            std::to_string(split.train.size()) + " training, " + std::to_string(split.validation.size()) +
            " validation (carved from the same labels), " + std::to_string(split.test.size()) + " test chips" +
            (split.over_budget ? ", " + std::to_string(split.over_budget) + " over the budget" : std::string()) +
            (split.dropped_by_buffer ? ", " + std::to_string(split.dropped_by_buffer) + " within the buffer"
                                     : std::string()) + "; every chip's role in split.csv");
}

std::vector<SplitRow> split_rows(const FinetuneConfig& c, const ChipCollection& chips, const LabelSplit& split) {
  std::vector<SplitRow> rows;
  for (const ChipAssignment& a : split.assignment) {
    const ChipRecord r = chips.store(a.chip.store).record(a.chip.chip);
    rows.push_back({c.stores[static_cast<std::size_t>(a.chip.store)].string(), a.chip.chip, r.scene, r.source_id,
                    r.label, a.unit, r.x, r.y, a.fold, role_name(a.role), a.reason});
  }
  return rows;
}

FinetuneData prepare_split(const FinetuneConfig& c, RunLifecycle& run) {
  FinetuneData data{ChipCollection(c.stores), {}, {}, {}, 0};
  data.artifact = describe_classifier(c, data.chips);
  data.split = split_labels(data.chips, c.split, c.budget);
  log_split(data.split, c.split.fold);
  if (run.is_writer()) {
    write_file_atomic(run.folder().file("split.csv"), split_table_csv(split_rows(c, data.chips, data.split)));
  }
  data.class_weights = class_weights(c, data.chips, data.split.train);
  const auto chips = static_cast<std::int64_t>(data.split.train.size());
  data.steps_per_epoch = std::max<std::int64_t>(1, (chips + c.train.batch - 1) / c.train.batch);
  return data;
}

// ---- build model

Finetuning build_model(const FinetuneConfig& c, const FinetuneData& data) {
  torch::manual_seed(c.train.seed);
  Finetuning f;
  f.model = ClassifierModel(data.artifact.spec);
  if (c.init.pretrained) load_encoder_weights(c.init.pretrain_run / "encoder.pt", *f.model->encoder);
  if (c.init.pretrained && f.model->decoder) load_decoder_weights(c.init.pretrain_run / "encoder.pt", *f.model->decoder);
  if (is_probe(c.head.kind)) return f;  // fitted on frozen features, no optimiser
  // Two groups, so the encoder (and decoder) can learn at encoder_lr_scale times the head's rate.
  f.optimizer = make_optimizer({{f.model->extractor_parameters(), c.encoder_lr_scale}, {f.model->head_parameters(), 1.0}},
                               c.train);
  return f;
}

// ---- checkpoints

void save_state(RunLifecycle& run, Finetuning& f, const FinetuneData& data, const EpochState& state,
                const MetricsLog& metrics, DataParallel& parallel) {
  parallel.agree_buffers(*f.model);
  if (!run.is_writer()) return;
  const auto folder = run.folder().file("checkpoints");
  CheckpointInfo info{state.step, model_spec_yaml(data.artifact.spec.model), run.config_hash(), {}};
  info.loop_state = {{"epochs_done", static_cast<double>(state.epochs_done)},
                     {"loss_sum", state.loss_sum},
                     {"best_f1", state.best_f1},
                     {"best_epoch", static_cast<double>(state.best_epoch)},
                     {"stopped_early", state.stopped_early ? 1.0 : 0.0}};
  save_checkpoint(checkpoint_path(folder, state.step), *f.model, *f.optimizer.optimizer, info);
  prune_checkpoints(folder, kCheckpointsKept);
  metrics.flush();
}

EpochState restore(RunLifecycle& run, Finetuning& f, const FinetuneData& data) {
  const auto last = latest_checkpoint(run.file("checkpoints"));
  if (!last) fail_usage("--resume: " + run.path().string() + " holds no checkpoint to continue from");
  if (read_checkpoint_info(*last).model_spec_yaml != model_spec_yaml(data.artifact.spec.model)) {
    fail_usage("--resume: the model differs from the run's; continue with the same config and pretrain run");
  }
  const CheckpointInfo info = load_checkpoint(*last, *f.model, *f.optimizer.optimizer);
  const auto value = [&](const char* key) {
    const auto found = info.loop_state.find(key);
    if (found == info.loop_state.end()) fail_runtime(last->string() + ": not a finetune checkpoint (no " + key + ")");
    return found->second;
  };
  EpochState state;
  state.step = info.step;
  state.epochs_done = static_cast<int>(value("epochs_done"));
  state.loss_sum = value("loss_sum");
  state.best_f1 = value("best_f1");
  state.best_epoch = static_cast<int>(value("best_epoch"));
  state.stopped_early = value("stopped_early") != 0;
  log::info("finetune: resuming from " + last->string() + " (step " + std::to_string(state.step) + ", " +
            std::to_string(state.epochs_done) + " epochs done)");
  return state;
}

// ---- train epochs

bool encoder_frozen(const FinetuneConfig& c, int epoch) {
  return c.freeze == FreezePolicy::frozen || (c.freeze == FreezePolicy::unfreeze_after && epoch < c.unfreeze_epoch);
}

void set_frozen(ClassifierModel& model, bool frozen) {
  for (auto& parameter : model->extractor_parameters()) parameter.set_requires_grad(!frozen);
}

// Training mode, but a frozen encoder keeps its normalisation statistics too.
void train_mode(ClassifierModel& model, bool frozen) {
  model->train();
  if (frozen) model->extractor_eval();
}

std::string format(const char* pattern, double value) {
  char text[64];
  std::snprintf(text, sizeof(text), pattern, value);
  return text;
}

// Data-parallel: each process predicts its share of the validation chips; their confusion
// counts, summed, give the scores of the whole set.
EpochScore validate_all(ClassifierModel& model, const FinetuneData& data, const FinetuneConfig& c,
                        DataParallel& parallel) {
  parallel.agree_buffers(*model);
  const auto& chips = data.split.validation;
  const ShardRange part = shard_range(static_cast<std::int64_t>(chips.size()), parallel.rank(), parallel.world());
  const std::vector<ChipRef> share(chips.begin() + part.begin, chips.begin() + part.end);
  const Predictions mine = predict_chips(model, data.chips, share, c.train.batch);
  const auto k = static_cast<int>(data.artifact.classes.size());
  std::vector<double> confusion(static_cast<std::size_t>(k * k), 0.0);
  for (std::size_t i = 0; i < mine.truth.size(); ++i) {
    confusion[static_cast<std::size_t>(mine.truth[i] * k + mine.predicted[i])] += 1;
  }
  parallel.sum(confusion, "validation confusion counts");
  Predictions whole;
  for (int cell = 0; cell < k * k; ++cell) {
    for (double n = 0; n < confusion[static_cast<std::size_t>(cell)]; ++n) {
      whole.truth.push_back(cell / k);
      whole.predicted.push_back(cell % k);
    }
  }
  std::int64_t correct = 0;
  for (std::size_t i = 0; i < whole.truth.size(); ++i) correct += whole.truth[i] == whole.predicted[i];
  const double accuracy = whole.truth.empty() ? 0.0 : static_cast<double>(correct) / static_cast<double>(whole.truth.size());
  return {macro_f1_of(whole, k), accuracy};
}

EpochScore validate(ClassifierModel& model, const FinetuneData& data, const FinetuneConfig& c) {
  const Predictions validation = predict_chips(model, data.chips, data.split.validation, c.train.batch);
  std::int64_t correct = 0;
  for (std::size_t i = 0; i < validation.truth.size(); ++i) correct += validation.truth[i] == validation.predicted[i];
  return {macro_f1_of(validation, static_cast<int>(data.artifact.classes.size())),
          static_cast<double>(correct) / static_cast<double>(validation.truth.size())};
}

// Keeps model.pt at the best epoch; true when `patience` epochs have passed without a better one.
bool early_stop(EpochState& state, const EpochScore& score, int epoch, RunLifecycle& run, Finetuning& f,
                const FinetuneData& data, const FinetuneConfig& c) {
  if (score.macro_f1 > state.best_f1) {
    state.best_f1 = score.macro_f1;
    state.best_epoch = epoch + 1;
    if (run.is_writer()) save_classifier(run.folder().file("model.pt"), f.model, data.artifact);
    return false;
  }
  if (epoch + 1 - state.best_epoch < c.patience) return false;
  log::info("finetune: no better validation macro F1 for " + std::to_string(c.patience) + " epochs; stopping");
  return true;
}

// The weighted cross-entropy of the global batch, through this process's part.
torch::Tensor batch_loss(const torch::Tensor& logits, const Batch& batch, const FinetuneData& data,
                         DataParallel& parallel) {
  const auto options = torch::nn::functional::CrossEntropyFuncOptions().weight(data.class_weights);
  if (parallel.single()) return torch::nn::functional::cross_entropy(logits, batch.labels, options);
  const double weight = data.class_weights.index_select(0, batch.labels).sum().item<double>();
  if (weight == 0) return parallel.global_mean(logits.sum() * 0, 0);  // no weighted label here
  return parallel.global_mean(torch::nn::functional::cross_entropy(logits, batch.labels, options), weight);
}

RunOutcome train_epochs(Finetuning& f, EpochState& state, const FinetuneData& data, const FinetuneConfig& c,
                        RunLifecycle& run, int stop_after, DataParallel& parallel) {
  const std::int64_t per_epoch = data.steps_per_epoch;
  const LearningRateSchedule schedule = warmup_cosine(c.train, c.epochs * per_epoch);
  LoaderSettings loading{c.train.batch, c.train.seed, c.train.augment, state.step};
  loading.rank = parallel.rank();
  loading.world = parallel.world();
  BatchLoader loader(data.chips, data.split.train, loading);
  TrainStep train_step(*f.model, *f.optimizer.optimizer, c.train.clip_norm, parallel.gradient_sync(),
                       parallel.loss_agreement());
  MetricsLog metrics(run.file("metrics.csv"), kEpochColumns);
  if (state.epochs_done > 0 || state.step > 0) metrics.resume(state.epochs_done);
  const int last_epoch = stop_after > 0 ? std::min(stop_after, c.epochs) : c.epochs;
  double lr = schedule.at(std::max<std::int64_t>(0, state.step - 1));  // the rate of the last step done

  for (int epoch = state.epochs_done; epoch < last_epoch && !state.stopped_early; ++epoch) {
    const bool frozen = encoder_frozen(c, epoch);
    set_frozen(f.model, frozen);
    for (std::int64_t step = state.step; step < (epoch + 1) * per_epoch; ++step) {
      const Batch batch = loader.next();
      lr = schedule.at(step);
      f.optimizer.set_learning_rate(lr);
      train_mode(f.model, frozen);
      const StepResult result = train_step.run([&] {
        const torch::Tensor logits = f.model->forward(batch.bands);  // (B, bands, H, W) -> (B, classes)
        return batch_loss(logits, batch, data, parallel);
      });
      if (!result.finite) {
        fail_non_finite("finetune", "step " + std::to_string(step + 1) + " (epoch " + std::to_string(epoch + 1) + ")",
                        run.file("checkpoints"));
      }
      state.loss_sum += result.loss;
      state.step = step + 1;
      if (run.stop_requested()) {
        save_state(run, f, data, state, metrics, parallel);
        return run.interrupted_after("step " + std::to_string(state.step) + " (epoch " + std::to_string(epoch + 1) + ")");
      }
    }

    const EpochScore score = parallel.single() ? validate(f.model, data, c) : validate_all(f.model, data, c, parallel);
    const double mean_loss = state.loss_sum / static_cast<double>(per_epoch);
    metrics.add({std::to_string(epoch + 1), metric_text(mean_loss), metric_text(lr), frozen ? "1" : "0",
                 metric_text(score.macro_f1), metric_text(score.accuracy)});
    log::info("epoch " + std::to_string(epoch + 1) + ": loss " + format("%.4f", mean_loss) +
              ", validation macro F1 " + format("%.3f", score.macro_f1));
    state.stopped_early = early_stop(state, score, epoch, run, f, data, c);
    state.epochs_done = epoch + 1;
    state.loss_sum = 0;
    save_state(run, f, data, state, metrics, parallel);
    if (run.stop_requested()) return run.interrupted_after("epoch " + std::to_string(epoch + 1));
  }
  if (!state.stopped_early && state.epochs_done < c.epochs) {
    return {RunStatus::stopped, "stopped after epoch " + std::to_string(state.epochs_done) + "; --resume continues"};
  }
  return {};
}

// ---- reload best, test, write

FinetuneResult test_best(RunLifecycle& run, const FinetuneData& data, const EpochState& state,
                         const FinetuneConfig& c) {
  ClassifierArtifact best;
  ClassifierModel chosen = load_classifier(run.folder().file("model.pt"), best);
  FinetuneResult result;
  result.best_epoch = state.best_epoch;
  result.epochs_run = state.epochs_done;
  result.best_validation_macro_f1 = state.best_f1;
  result.test = predict_chips(chosen, data.chips, data.split.test, c.train.batch);
  result.metrics = write_assessment(run.folder().path(), result.test, data.chips, data.artifact.classes);
  const std::string which = state.best_epoch > 0 ? "best epoch " + std::to_string(state.best_epoch)
                                                  : std::string("probe fitted on frozen features");
  log::info("finetune: " + which + "; test macro F1 " +
            format("%.3f", result.metrics.macro_f1) + " on " + std::to_string(data.split.test.size()) +
            " chips of fold " + std::to_string(c.split.fold));
  return result;
}

// ---- probe heads: fit on frozen features of the budgeted chips, then test

// A probe needs no early stopping, so the validation carved from the budget is fitted on too.
std::vector<ChipRef> budgeted_labels(const LabelSplit& split) {
  std::vector<ChipRef> labels = split.train;
  labels.insert(labels.end(), split.validation.begin(), split.validation.end());
  return labels;
}

FinetuneResult fit_and_test_probe(RunLifecycle& run, Finetuning& f, const FinetuneData& data, const FinetuneConfig& c) {
  const std::vector<ChipRef> labels = budgeted_labels(data.split);
  data.chips.forget_reads();
  const ProbeFit fit =
      fit_probe(f.model, data.chips, labels, class_weights(c, data.chips, labels), c.train.batch, c.train.seed);
  const std::int64_t labels_read = data.chips.chips_read();  // before features.csv reads the test chips
  log::info("finetune: " + std::to_string(labels_read) + " labelled chips read for the probe's fit");
  if (run.is_writer()) {
    run.folder().record("probe", probe_record(fit));
    save_classifier(run.folder().file("model.pt"), f.model, data.artifact);
    write_probe_features(run.folder().file("features.csv"), f.model, data.chips, labels, data.split.test,
                         c.train.batch, fit.inner_fold);
  }
  FinetuneResult result = test_best(run, data, EpochState{}, c);
  result.labelled_chips_read = labels_read;
  return result;
}

}  // namespace

FinetuneResult run_finetune(const FinetuneConfig& c, const FinetuneOptions& options) {
  DataParallel one_process;
  DataParallel& parallel = options.parallel ? *options.parallel : one_process;
  RunLifecycle run({"finetune", c.output, options.force, options.resume, options.resolved_config, c.train.seed,
                    parallel.single() ? nullptr : &parallel.group()});
  FinetuneResult result;
  run.execute([&] {
    log::info(head_choice_line(c.head, c.head_choice));
    if (run.is_writer()) run.folder().record("head", head_choice_record(c.head, c.head_choice));
    const FinetuneData data = prepare_split(c, run);
    Finetuning model = build_model(c, data);
    if (is_probe(c.head.kind)) {
      result = fit_and_test_probe(run, model, data, c);
      return RunOutcome{};
    }
    EpochState state = options.resume ? restore(run, model, data) : EpochState{};
    parallel.prepare(*model.model);
    // The head's dropout draws from torch's generator, seeded alike everywhere: without this
    // every rank would drop the same units of its slice. Seeded by rank and by the step the
    // job starts from (a resumed job draws other masks than an uninterrupted one would).
    if (!parallel.single()) torch::manual_seed(c.train.seed + 7919 * static_cast<std::uint64_t>(parallel.rank() + 1) +
                                               static_cast<std::uint64_t>(state.step));
    data.chips.forget_reads();
    const RunOutcome outcome = train_epochs(model, state, data, c, run, options.stop_after, parallel);
    const std::int64_t labels_read = data.chips.chips_read();
    log::info("finetune: " + std::to_string(labels_read) + " labelled chips read for training and validation");
    if (outcome.status != RunStatus::done) {
      result.status = outcome.status;
      result.labelled_chips_read = labels_read;
      return outcome;
    }
    if (run.is_writer()) result = test_best(run, data, state, c);  // the test fold is rank 0's alone
    result.labelled_chips_read = labels_read;
    return outcome;
  });
  return result;
}

}  // namespace tinct
