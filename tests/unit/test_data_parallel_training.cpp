// Both training loops as data-parallel jobs: the test binary launches itself as two local
// ranks on loopback (run_local_ranks), each running the hidden "rank:" case, one thread
// each, on the deterministic stores of tiny_stores.hpp. Checked against one process of the
// same config (the reference: data parallelism must not change the mathematics): after k
// steps with global batch B (B/2 per rank, augmentation off, batch_norm: sync) the
// parameters, buffers and logged losses agree within 1e-5; a 2-rank run stopped part-way
// and resumed on one process continues the one-process loss curve.
// The configs use SGD: Adam divides each gradient by its own running magnitude, so where a
// gradient is rounding noise (~1e-9, e.g. a channel ReLU has switched off) its update is
// +-lr whichever way the noise falls, and any change of summation order (two partial sums
// instead of one) moves such a parameter by up to 2 lr. SGD keeps the rounding at its size.
#include <torch/torch.h>
#undef CHECK
#include <catch2/catch.hpp>

#include <stdlib.h>

#include <algorithm>
#include <fstream>
#include <sstream>
#include <string>
#include <vector>

#include "distributed/local_launcher.hpp"
#include "finetune/finetune_config.hpp"
#include "finetune/finetune_job.hpp"
#include "models/colourisation_model.hpp"
#include "pretrain/pretrain_config.hpp"
#include "pretrain/pretrain_job.hpp"
#include "runs/checkpoint.hpp"
#include "runs/classifier_artifact.hpp"
#include "runs/metrics_log.hpp"
#include "runs/torch_runtime.hpp"
#include "temp_folder.hpp"
#include "tiny_stores.hpp"
#include "training/data_parallel.hpp"
#include "training/optimizer.hpp"
#include "training/parallel_launch.hpp"
#include "util/config_node.hpp"

namespace fs = std::filesystem;
using tinct::testing::TempFolder;

namespace {

constexpr double kTolerance = 1e-5;

// 6 steps of a global batch of 4 chips; augmentation off; statistics over the global batch.
std::string pretrain_yaml(const std::string& output) {
  return "config: pretrain\nstores: [tiny.pairs]\noutput: " + output +
         "\nmodel: {encoder: compact, width: 0.5}\n"
         "train: {steps: 6, batch: 4, lr: 0.003, warmup: 2, log_every: 1, seed: 5, augment: false, optimizer: sgd, "
         "precision: fp32}\n"
         "validation: {every: 3, chips: 8, previews: 0}\n"
         "checkpoints: {every: 3, keep: 2}\n"
         "distributed: {timeout: 30, batch_norm: sync}\n";
}

// 4 epochs of a global batch of 8 chips from scratch; no dropout (its masks are drawn per process).
// lr 0.003: at 0.01 (39 training chips, 5 steps an epoch) the 8th step jumps from a loss of
// 0.19 to 0.69, and its backward pass through stage 4 (1 x 1 cells at 16 px chips, batch
// norm over 8 values) turns parameter differences of 1e-10 into gradients 0.1-4 % apart.
// One process on 1 thread and on 2 threads then drifts as far apart (0.03 % of the loss in
// epoch 2, 0.2 % in epoch 3) as two ranks from one process: rounding of a different
// summation order, amplified, not data parallelism. At 0.003 both stay within 2e-7.
std::string finetune_yaml(const std::string& output) {
  return "config: finetune\nstores: [tiny.labels]\noutput: " + output +
         "\ninit: {from: scratch, model: {encoder: compact, width: 0.5}}\nhead: {dropout: 0}\n"
         "split: {method: blocks, block_size: 300, folds: 3, fold: 0}\n"
         "train: {epochs: 4, batch: 8, lr: 0.003, seed: 3, patience: 10, augment: false, optimizer: sgd}\n"
         "distributed: {timeout: 30, batch_norm: sync}\n";
}

std::string read_text(const fs::path& file) {
  std::ifstream in(file);
  std::stringstream text;
  text << in.rdbuf();
  return text.str();
}

// Runs the config in `folder` as this process, alone or as a rank of the job its environment
// describes (the CLI's path: the config's distributed: section, then join).
void run_config(const fs::path& folder, const std::string& yaml, bool resume, int stop_after) {
  const auto root = tinct::ConfigNode::from_text(yaml, "job.yaml", folder);
  const std::string kind = root.choice("config", {"pretrain", "finetune"});
  if (kind == "pretrain") {
    const tinct::PretrainConfig config = tinct::read_pretrain_config(root);
    root.finish();
    const auto parallel = tinct::join_data_parallel(config.distributed, 0, 1);
    tinct::PretrainOptions options{resume, false, stop_after, tinct::resolved_text(root), parallel.get()};
    tinct::run_pretrain(config, options);
  } else {
    const tinct::FinetuneConfig config = tinct::read_finetune_config(root);
    root.finish();
    const auto parallel = tinct::join_data_parallel(config.distributed, 0, 1);
    tinct::FinetuneOptions options{false, resume, stop_after, tinct::resolved_text(root), parallel.get()};
    tinct::run_finetune(config, options);
  }
}

// The same config as two local ranks of this binary (hidden case below).
void run_two_ranks(const fs::path& folder, const std::string& yaml, int stop_after = 0) {
  std::ofstream(folder / "job.yaml") << yaml;
  ::setenv("TINCT_TEST_JOB_FOLDER", folder.c_str(), 1);
  ::setenv("TINCT_TEST_JOB_STOP_AFTER", std::to_string(stop_after).c_str(), 1);
  tinct::LocalLaunch launch;
  launch.world = 2;
  launch.arguments = {"rank: run job.yaml"};
  launch.grace_seconds = 60;
  tinct::run_local_ranks(launch);
}

std::vector<double> column(const fs::path& metrics_csv, const std::string& name) {
  std::ifstream in(metrics_csv);
  std::string line;
  std::getline(in, line);
  std::vector<std::string> header;
  for (std::stringstream fields(line); std::getline(fields, line, ',');) header.push_back(line);
  const auto at = static_cast<std::size_t>(std::find(header.begin(), header.end(), name) - header.begin());
  std::vector<double> values;
  while (std::getline(in, line)) {
    std::vector<std::string> fields;
    for (std::stringstream row(line); std::getline(row, line, ',');) fields.push_back(line);
    fields.resize(header.size());
    if (!fields.at(at).empty()) values.push_back(std::stod(fields[at]));
  }
  return values;
}

void check_close(const std::vector<double>& actual, const std::vector<double>& expected, const std::string& what) {
  REQUIRE(actual.size() == expected.size());
  for (std::size_t i = 0; i < expected.size(); ++i) {
    INFO(what << " " << i + 1 << ": two ranks " << tinct::metric_text(actual[i]) << ", one process "
              << tinct::metric_text(expected[i]));
    CHECK(actual[i] == Approx(expected[i]).epsilon(kTolerance).margin(kTolerance));
  }
}

// Every floating parameter and buffer of the two modules, by name, within the tolerance.
void check_same_state(torch::nn::Module& actual, torch::nn::Module& expected) {
  auto named = [](torch::nn::Module& module) {
    std::map<std::string, torch::Tensor> all;
    for (const auto& item : module.named_parameters()) all[item.key()] = item.value();
    for (const auto& item : module.named_buffers()) all[item.key()] = item.value();
    return all;
  };
  const auto a = named(actual), e = named(expected);
  REQUIRE(a.size() == e.size());
  double largest = 0;
  for (const auto& [name, tensor] : e) {
    INFO(name);
    REQUIRE(a.count(name) == 1);
    const double difference = (a.at(name).to(torch::kFloat64) - tensor.to(torch::kFloat64)).abs().max().item<double>();
    CHECK(difference <= kTolerance);
    largest = std::max(largest, difference);
  }
  WARN("largest difference between the two ranks' model and one process's: " << largest);
}

void check_same_checkpoint(const fs::path& actual, const fs::path& expected) {
  auto load = [](const fs::path& file) {
    tinct::ColourisationModel model(tinct::model_spec_from_yaml(tinct::read_checkpoint_info(file).model_spec_yaml));
    tinct::TrainSettings settings;
    settings.optimizer = "sgd";  // as pretrain_yaml
    tinct::GroupedOptimizer optimizer = tinct::make_optimizer({{model->parameters(), 1.0}}, settings);
    tinct::load_checkpoint(file, *model, *optimizer.optimizer);
    return model;
  };
  tinct::ColourisationModel a = load(actual), e = load(expected);
  check_same_state(*a, *e);
}

}  // namespace

TEST_CASE("rank: run job.yaml", "[.]") {
  const char* folder = ::getenv("TINCT_TEST_JOB_FOLDER");
  REQUIRE(folder != nullptr);
  const int stop_after = std::stoi(::getenv("TINCT_TEST_JOB_STOP_AFTER"));
  run_config(folder, read_text(fs::path(folder) / "job.yaml"), false, stop_after);
}

TEST_CASE("pretraining on two ranks with B/2 each equals one process with batch B") {
  tinct::configure_threads(1);
  TempFolder folder;
  tinct::testing::write_tiny_pair_store(folder / "tiny.pairs", 24);
  run_config(folder.path(), pretrain_yaml("runs/one"), false, 0);
  REQUIRE_NOTHROW(run_two_ranks(folder.path(), pretrain_yaml("runs/two")));

  const fs::path one = folder / "runs/one", two = folder / "runs/two";
  check_close(column(two / "metrics.csv", "loss"), column(one / "metrics.csv", "loss"), "loss at step");
  check_close(column(two / "metrics.csv", "val_loss"), column(one / "metrics.csv", "val_loss"), "validation loss");
  check_close(column(two / "metrics.csv", "val_delta_e"), column(one / "metrics.csv", "val_delta_e"), "delta E");
  check_same_checkpoint(two / "checkpoints/step-00000003.pt", one / "checkpoints/step-00000003.pt");
  check_same_checkpoint(two / "checkpoints/step-00000006.pt", one / "checkpoints/step-00000006.pt");
  CHECK(fs::exists(two / "encoder.pt"));
}

TEST_CASE("a 2-rank pretrain stopped part-way and resumed on one process continues the loss curve") {
  tinct::configure_threads(1);
  TempFolder folder;
  tinct::testing::write_tiny_pair_store(folder / "tiny.pairs", 24);
  run_config(folder.path(), pretrain_yaml("runs/one"), false, 0);
  REQUIRE_NOTHROW(run_two_ranks(folder.path(), pretrain_yaml("runs/moved"), 3));
  const fs::path moved = folder / "runs/moved";
  CHECK(column(moved / "metrics.csv", "loss").size() == 3);
  run_config(folder.path(), pretrain_yaml("runs/moved"), true, 0);  // one process, from step 3
  check_close(column(moved / "metrics.csv", "loss"), column(folder / "runs/one/metrics.csv", "loss"), "loss at step");
  check_same_checkpoint(moved / "checkpoints/step-00000006.pt", folder / "runs/one/checkpoints/step-00000006.pt");
}

TEST_CASE("fine-tuning on two ranks with B/2 each equals one process with batch B") {
  tinct::configure_threads(1);
  TempFolder folder;
  tinct::testing::write_tiny_label_store(folder / "tiny.labels", 8);
  run_config(folder.path(), finetune_yaml("runs/one"), false, 0);
  REQUIRE_NOTHROW(run_two_ranks(folder.path(), finetune_yaml("runs/two")));

  const fs::path one = folder / "runs/one", two = folder / "runs/two";
  check_close(column(two / "metrics.csv", "loss"), column(one / "metrics.csv", "loss"), "loss of epoch");
  check_close(column(two / "metrics.csv", "val_macro_f1"), column(one / "metrics.csv", "val_macro_f1"), "macro F1");
  tinct::ClassifierArtifact a, e;
  tinct::ClassifierModel model_two = tinct::load_classifier(two / "model.pt", a);
  tinct::ClassifierModel model_one = tinct::load_classifier(one / "model.pt", e);
  check_same_state(*model_two, *model_one);
  CHECK(fs::exists(two / "metrics.json"));  // the test fold, assessed by rank 0
}
