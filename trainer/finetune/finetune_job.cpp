#include "finetune/finetune_job.hpp"

#include <torch/torch.h>

#include <cstdio>

#include "batches/batch_loader.hpp"
#include "finetune/classifier_predictions.hpp"
#include "runs/classifier_artifact.hpp"
#include "runs/encoder_artifact.hpp"
#include "runs/metrics_log.hpp"
#include "runs/run_folder.hpp"
#include "util/error.hpp"
#include "util/log.hpp"

namespace tinct {
namespace {

const std::vector<std::string> kEpochColumns{"epoch", "loss", "lr", "encoder_frozen", "val_macro_f1",
                                             "val_accuracy"};

// The architecture and input statistics: from the pretrain run, or the config.
ClassifierArtifact describe_classifier(const FinetuneConfig& c, ChipCollection& chips) {
  ClassifierArtifact artifact;
  artifact.classes = chips.classes();
  artifact.spec.classes = static_cast<int>(artifact.classes.size());
  artifact.spec.dropout = c.dropout;
  artifact.spec.hidden = c.hidden;
  artifact.chip_size = chips.chip_size();
  if (!c.init.pretrain_run.empty()) {
    const EncoderArtifact encoder = read_encoder_artifact(c.init.pretrain_run / "encoder.pt");
    if (encoder.chip_size != chips.chip_size()) {
      fail_usage("the label store's chips are " + std::to_string(chips.chip_size()) + " px but the encoder was " +
                 "pretrained on " + std::to_string(encoder.chip_size) + " px chips; make the label store with " +
                 "chips.size " + std::to_string(encoder.chip_size));
    }
    chips.use_normalisation(encoder.normalisation);
    artifact.spec.model = model_spec_from_yaml(encoder.model_spec_yaml, c.init.pretrain_run.string());
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

// Two groups, so the encoder can learn at encoder_lr_scale times the head's rate.
std::unique_ptr<torch::optim::Optimizer> make_optimizer(ClassifierModel& model, const FinetuneConfig& c) {
  const double encoder_lr = c.lr * c.encoder_lr_scale;
  std::vector<torch::optim::OptimizerParamGroup> groups;
  if (c.optimizer == "sgd") {
    const auto options = [&](double lr) {
      return std::make_unique<torch::optim::SGDOptions>(
          torch::optim::SGDOptions(lr).momentum(0.9).weight_decay(c.weight_decay));
    };
    groups.emplace_back(model->encoder->parameters(), options(encoder_lr));
    groups.emplace_back(model->head->parameters(), options(c.lr));
    return std::make_unique<torch::optim::SGD>(groups, torch::optim::SGDOptions(c.lr));
  }
  const auto options = [&](double lr) {
    return std::make_unique<torch::optim::AdamWOptions>(torch::optim::AdamWOptions(lr).weight_decay(c.weight_decay));
  };
  groups.emplace_back(model->encoder->parameters(), options(encoder_lr));
  groups.emplace_back(model->head->parameters(), options(c.lr));
  return std::make_unique<torch::optim::AdamW>(groups, torch::optim::AdamWOptions(c.lr));
}

bool encoder_frozen(const FinetuneConfig& c, int epoch) {
  return c.freeze == FreezePolicy::frozen || (c.freeze == FreezePolicy::unfreeze_after && epoch < c.unfreeze_epoch);
}

void set_frozen(ClassifierModel& model, bool frozen) {
  for (auto& parameter : model->encoder->parameters()) parameter.set_requires_grad(!frozen);
}

std::string format(const char* pattern, double value) {
  char text[64];
  std::snprintf(text, sizeof(text), pattern, value);
  return text;
}

void log_split(const LabelSplit& split, std::size_t budgeted) {
  log::info("finetune: " + std::to_string(split.units) + " split units; " + std::to_string(budgeted) +
            " training chips (of " + std::to_string(split.train.size()) + " before the budget), " +
            std::to_string(split.validation.size()) + " validation, " + std::to_string(split.test.size()) +
            " test" + (split.dropped_by_buffer ? ", " + std::to_string(split.dropped_by_buffer) +
                                                    " dropped within the buffer" : std::string()));
}

}  // namespace

FinetuneSummary run_finetune(const FinetuneConfig& c, const FinetuneOptions& options) {
  RunFolder run(c.output, {options.force, false});
  run.write_config(options.resolved_config);
  run.write_status(RunStatus::running, static_cast<std::int64_t>(c.seed));
  try {
    ChipCollection chips(c.stores);
    const ClassifierArtifact artifact = describe_classifier(c, chips);
    torch::manual_seed(c.seed);
    ClassifierModel model(artifact.spec);
    if (c.init.pretrained) load_encoder_weights(c.init.pretrain_run / "encoder.pt", *model->encoder);
    const LabelSplit split = split_labels(chips, c.split);
    const std::vector<ChipRef> train = apply_budget(chips, split.train, c.budget, c.seed);
    log_split(split, train.size());
    const torch::Tensor weights = class_weights(c, chips, train);
    auto optimizer = make_optimizer(model, c);
    BatchLoader loader(chips, train, {c.batch, c.seed, c.augment, 0});
    const std::int64_t steps_per_epoch = std::max<std::int64_t>(1, (static_cast<std::int64_t>(train.size()) + c.batch - 1) / c.batch);
    MetricsLog metrics(run.file("metrics.csv"), kEpochColumns);
    const int classes = static_cast<int>(artifact.classes.size());
    double best_f1 = -1;
    int best_epoch = 0;

    for (int epoch = 0; epoch < c.epochs; ++epoch) {
      const bool frozen = encoder_frozen(c, epoch);
      set_frozen(model, frozen);
      double loss_sum = 0;
      for (std::int64_t s = 0; s < steps_per_epoch; ++s) {
        const Batch batch = loader.next();
        model->train();
        if (frozen) model->encoder->eval();  // a frozen encoder keeps its normalisation statistics too

        const torch::Tensor logits = model->forward(batch.bands);  // (B, classes)
        const torch::Tensor loss = torch::nn::functional::cross_entropy(
            logits, batch.labels, torch::nn::functional::CrossEntropyFuncOptions().weight(weights));
        if (!std::isfinite(loss.item<double>())) {
          fail_runtime("finetune: the loss is not finite in epoch " + std::to_string(epoch + 1) +
                       "; lower train.lr");
        }
        optimizer->zero_grad();
        loss.backward();
        optimizer->step();
        loss_sum += loss.item<double>();
      }
      const Predictions validation = predict_chips(model, chips, split.validation, c.batch);
      const double f1 = macro_f1_of(validation, classes);
      std::int64_t correct = 0;
      for (std::size_t i = 0; i < validation.truth.size(); ++i) correct += validation.truth[i] == validation.predicted[i];
      metrics.add({std::to_string(epoch + 1), metric_text(loss_sum / steps_per_epoch), metric_text(c.lr),
                   frozen ? "1" : "0", metric_text(f1), metric_text(double(correct) / validation.truth.size())});
      log::info("epoch " + std::to_string(epoch + 1) + ": loss " + format("%.4f", loss_sum / steps_per_epoch) +
                ", validation macro F1 " + format("%.3f", f1));
      if (f1 > best_f1) {
        best_f1 = f1;
        best_epoch = epoch + 1;
        save_classifier(run.file("model.pt"), model, artifact);
      } else if (epoch + 1 - best_epoch >= c.patience) {
        log::info("finetune: no better validation macro F1 for " + std::to_string(c.patience) + " epochs; stopping");
        break;
      }
    }
    metrics.flush();
    ClassifierArtifact best;
    ClassifierModel chosen = load_classifier(run.file("model.pt"), best);
    const double test_f1 = write_assessment(run.path(), predict_chips(chosen, chips, split.test, c.batch), chips,
                                            artifact.classes);
    log::info("finetune: best epoch " + std::to_string(best_epoch) + "; test macro F1 " + format("%.3f", test_f1) +
              " on " + std::to_string(split.test.size()) + " chips of fold " + std::to_string(c.split.fold));
    run.write_status(RunStatus::done, static_cast<std::int64_t>(c.seed));
    return {test_f1, best_epoch};
  } catch (...) {
    run.write_status(RunStatus::failed, static_cast<std::int64_t>(c.seed));
    throw;
  }
}

}  // namespace tinct
