// The shared parts of the training loops (trainer/training) and the model archive
// (trainer/runs): train settings, schedule, optimiser groups, the train step and its
// gradient-sync hook, stop signals, the run lifecycle's statuses and reasons, and the
// archive's kinds, versions, failed saves and random state. Expected values are hand
// computations shown beside them.
#include <torch/torch.h>
#undef CHECK
#include <catch2/catch.hpp>

#include <signal.h>
#include <sys/resource.h>
#include <sys/wait.h>
#include <unistd.h>
#include <yaml-cpp/yaml.h>

#include <cmath>
#include <fstream>
#include <string>
#include <vector>

#include "batches/chip_collection.hpp"
#include "finetune/finetune_config.hpp"
#include "models/model_spec.hpp"
#include "runs/checkpoint.hpp"
#include "runs/model_archive.hpp"
#include "temp_folder.hpp"
#include "training/lr_schedule.hpp"
#include "training/optimizer.hpp"
#include "training/run_lifecycle.hpp"
#include "training/train_settings.hpp"
#include "training/train_step.hpp"
#include "util/config_node.hpp"
#include "util/error.hpp"

using Catch::Matchers::Contains;
using tinct::testing::TempFolder;
using tinct::testing::read_text;

namespace {

tinct::TrainSettings read_train(const std::string& yaml, const tinct::TrainSettings& defaults) {
  const auto root = tinct::ConfigNode::from_text(yaml, "train.yaml", ".");
  return tinct::read_train_settings(root.section("train"), defaults);
}

// Runs `body` in a child process; returns its wait status.
template <typename Body>
int in_child(Body body) {
  const pid_t child = ::fork();
  if (child == 0) {
    body();
    ::_exit(0);
  }
  int status = 0;
  ::waitpid(child, &status, 0);
  return status;
}

}  // namespace

TEST_CASE("the train section keeps each command's defaults and checks min_lr") {
  const tinct::TrainSettings pretrain = read_train("train: {}", tinct::TrainSettings{});
  CHECK(pretrain.batch == 32);
  CHECK(pretrain.lr == 2e-3);
  CHECK(pretrain.weight_decay == 1e-2);
  CHECK(pretrain.warmup == 100);
  CHECK(pretrain.clip_norm == 1.0);
  const tinct::TrainSettings finetune = read_train("train: {}", tinct::finetune_train_defaults());
  CHECK(finetune.batch == 16);
  CHECK(finetune.lr == 1e-3);
  CHECK(finetune.weight_decay == 1e-4);
  CHECK(finetune.warmup == 0);
  CHECK(finetune.min_lr == 0);
  const tinct::TrainSettings sgd = read_train("train: {optimizer: sgd, momentum: 0.5, lr: 0.1}", finetune);
  CHECK(sgd.optimizer == "sgd");
  CHECK(sgd.momentum == 0.5);
  CHECK_THROWS_WITH(read_train("train: {lr: 0.01, min_lr: 0.02}", finetune),
                    Contains("train.min_lr: must not exceed lr") && Contains("line 1"));
}

TEST_CASE("the schedule shortens a warm-up as long as the run") {
  tinct::TrainSettings settings;
  settings.lr = 0.04;
  settings.warmup = 100;
  const tinct::LearningRateSchedule schedule = tinct::warmup_cosine(settings, 5);
  CHECK(schedule.warmup_steps == 4);
  CHECK(schedule.at(0) == Approx(0.01));  // 0.04 * 1 / 4
  CHECK(schedule.at(3) == Approx(0.04));  // the last warm-up step is at the base rate
  CHECK(schedule.at(4) == Approx(0.04));  // progress 0: cos(0) = 1
  settings.warmup = 0;
  settings.min_lr = 0.04;
  CHECK(tinct::warmup_cosine(settings, 7).at(5) == 0.04);  // min_lr = lr: constant
}

TEST_CASE("optimiser groups learn at their scale of the rate, with the configured momentum") {
  torch::nn::Linear encoder(2, 2), head(2, 1);
  tinct::TrainSettings settings;
  settings.optimizer = "sgd";
  settings.momentum = 0.7;
  settings.lr = 0.01;
  tinct::GroupedOptimizer grouped =
      tinct::make_optimizer({{encoder->parameters(), 0.3}, {head->parameters(), 1.0}}, settings);
  auto& groups = grouped.optimizer->param_groups();
  REQUIRE(groups.size() == 2);
  CHECK(groups[0].options().get_lr() == Approx(0.003));
  CHECK(static_cast<torch::optim::SGDOptions&>(groups[0].options()).momentum() == 0.7);
  grouped.set_learning_rate(0.5);
  CHECK(groups[0].options().get_lr() == Approx(0.15));
  CHECK(groups[1].options().get_lr() == Approx(0.5));
}

TEST_CASE("a train step syncs gradients after backward and before clipping, then updates") {
  torch::nn::Linear model(2, 1);
  {
    torch::NoGradGuard no_grad;
    model->weight.copy_(torch::tensor({{1.0f, 2.0f}}));
    model->bias.fill_(0.0f);
  }
  tinct::TrainSettings settings;
  settings.optimizer = "sgd";
  settings.momentum = 0;
  settings.weight_decay = 0;
  settings.lr = 0.1;
  tinct::GroupedOptimizer grouped = tinct::make_optimizer({{model->parameters(), 1.0}}, settings);
  std::vector<torch::Tensor> seen;
  tinct::TrainStep step(*model, *grouped.optimizer, /*clip_norm=*/1.0, [&](const std::vector<torch::Tensor>& parameters) {
    for (const auto& p : parameters) seen.push_back(p.grad().clone());
  });
  // Loss = 10 * (w . (3, 4) + b): gradients w: (30, 40), b: 10, norm sqrt(2600) = 50.99.
  const tinct::StepResult result = step.run([&] { return 10 * model->forward(torch::tensor({{3.0f, 4.0f}})).sum(); });
  CHECK(result.finite);
  CHECK(result.loss == Approx(110.0));  // 10 * (3 + 8)
  REQUIRE(seen.size() == 2);
  CHECK(seen[0][0][0].item<double>() == Approx(30.0));  // before clipping
  const double scale = 1.0 / std::sqrt(2600.0);         // clip_grad_norm_: max_norm / total_norm
  CHECK(model->weight[0][0].item<double>() == Approx(1.0 - 0.1 * 30 * scale).epsilon(1e-5));
  CHECK(model->bias[0].item<double>() == Approx(-0.1 * 10 * scale).epsilon(1e-5));
}

TEST_CASE("a non-finite loss updates nothing and the failure names the last checkpoint") {
  TempFolder folder;
  torch::nn::Linear model(2, 1);
  const torch::Tensor before = model->weight.clone();
  torch::optim::SGD optimizer(model->parameters(), 0.1);
  tinct::TrainStep step(*model, optimizer, 0);
  const tinct::StepResult result = step.run([&] { return model->forward(torch::ones({1, 2})).sum() * NAN; });
  CHECK_FALSE(result.finite);
  CHECK(torch::equal(model->weight, before));
  tinct::save_checkpoint(tinct::checkpoint_path(folder.path(), 4), *model, optimizer, {4, "spec", "hash", {}});
  CHECK_THROWS_WITH(tinct::fail_non_finite("pretrain", "step 5", folder.path()),
                    Contains("not finite at step 5") && Contains("step-00000004.pt") && Contains("--resume") &&
                        Contains("train.lr"));
}

TEST_CASE("a non-finite loss before the first checkpoint suggests --force, not --resume") {
  TempFolder folder;
  try {
    tinct::fail_non_finite("pretrain", "step 2", folder.path() / "checkpoints");
    FAIL("expected an error");
  } catch (const tinct::Error& e) {
    CHECK_THAT(e.what(), Contains("No checkpoint was written yet") && Contains("--force") && Contains("train.lr"));
    CHECK_THAT(e.what(), !Contains("run the same command with --resume"));
  }
}

TEST_CASE("the first stop signal is noted, a second one ends the process, and handlers are restored") {
  const int status = in_child([] {
    tinct::StopSignals signals;
    ::raise(SIGTERM);
    if (!signals.requested() || signals.signal_name() != "SIGTERM") ::_exit(4);
    ::raise(SIGINT);
    ::_exit(5);  // not reached: the second signal ends the process
  });
  CHECK(WIFSIGNALED(status));
  CHECK(WTERMSIG(status) == SIGINT);
  const int restored = in_child([] {
    ::signal(SIGTERM, SIG_IGN);
    { tinct::StopSignals signals; }
    ::raise(SIGTERM);  // ignored again
    ::_exit(3);
  });
  CHECK(WIFEXITED(restored));
  CHECK(WEXITSTATUS(restored) == 3);
}

TEST_CASE("a failed run records its reason in run.yaml and log.txt") {
  TempFolder folder;
  const auto path = folder / "failing";
  {
    tinct::RunLifecycle run({"finetune", path, false, false, "config: finetune\n", 9});
    CHECK(YAML::LoadFile((path / "run.yaml").string())["status"].as<std::string>() == "running");
    CHECK_THROWS_WITH(run.execute([]() -> tinct::RunOutcome { tinct::fail_runtime("the store vanished"); }),
                      "the store vanished");
  }
  const YAML::Node run_yaml = YAML::LoadFile((path / "run.yaml").string());
  CHECK(run_yaml["status"].as<std::string>() == "failed");
  CHECK(run_yaml["reason"].as<std::string>() == "the store vanished");
  CHECK_FALSE(run_yaml["ended"].as<std::string>().empty());
  CHECK_THAT(read_text(path / "log.txt"), Contains("error: finetune failed: the store vanished"));
}

TEST_CASE("an interrupted run says so and why, and fails with exit 1") {
  TempFolder folder;
  const auto path = folder / "interrupted";
  {
    tinct::RunLifecycle run({"pretrain", path, false, false, "config: pretrain\n", 1});
    try {
      run.execute([&] {
        ::raise(SIGTERM);  // caught by the lifecycle's handler: the loop finishes its step
        REQUIRE(run.stop_requested());
        return run.interrupted_after("step 3");
      });
      FAIL("expected an error");
    } catch (const tinct::Error& e) {
      CHECK(e.exit_code() == 1);
      CHECK_THAT(e.what(), Contains("interrupted by SIGTERM after step 3") && Contains("--resume continues"));
    }
  }
  const YAML::Node run_yaml = YAML::LoadFile((path / "run.yaml").string());
  CHECK(run_yaml["status"].as<std::string>() == "interrupted");
  CHECK_THAT(run_yaml["reason"].as<std::string>(), Contains("SIGTERM after step 3"));
  CHECK_THAT(read_text(path / "log.txt"), Contains("interrupted by SIGTERM"));
}

TEST_CASE("resuming with another config is refused before anything is written") {
  TempFolder folder;
  const auto path = folder / "run";
  {
    tinct::RunLifecycle run({"pretrain", path, false, false, "config: pretrain\nseed: 1\n", 1});
    run.execute([] { return tinct::RunOutcome{tinct::RunStatus::stopped, "stopped after step 2"}; });
  }
  CHECK_THROWS_WITH(tinct::RunLifecycle({"pretrain", path, false, true, "config: pretrain\nseed: 2\n", 2}),
                    Contains("the config differs"));
  const YAML::Node run_yaml = YAML::LoadFile((path / "run.yaml").string());
  CHECK(run_yaml["status"].as<std::string>() == "stopped");
  CHECK(run_yaml["reason"].as<std::string>() == "stopped after step 2");
}

TEST_CASE("resuming with another learning rate is allowed and recorded in run.yaml, twice") {
  TempFolder folder;
  const auto path = folder / "run";
  const std::string config = "config: pretrain\ntrain: {lr: 0.002, batch: 8, warmup: 2}\n";
  {
    tinct::RunLifecycle run({"pretrain", path, false, false, config, 1});
    run.execute([] { return tinct::RunOutcome{tinct::RunStatus::stopped, "stopped after step 2"}; });
  }
  const std::string lower = "config: pretrain\ntrain: {lr: 0.001, batch: 8, warmup: 3}\n";
  {
    tinct::RunLifecycle run({"pretrain", path, false, true, lower, 1});
    run.execute([] { return tinct::RunOutcome{tinct::RunStatus::stopped, "stopped after step 4"}; });
  }
  CHECK(read_text(path / "config.resolved.yaml") == lower);
  {
    const std::string lowest = "config: pretrain\ntrain: {lr: 0.0005, batch: 8, warmup: 3}\n";
    tinct::RunLifecycle run({"pretrain", path, false, true, lowest, 1});
    run.execute([] { return tinct::RunOutcome{}; });
  }
  const YAML::Node changes = YAML::LoadFile((path / "run.yaml").string())["resumed_with_changes"];
  REQUIRE(changes.size() == 3);
  CHECK(changes[0]["key"].as<std::string>() == "train.lr");
  CHECK(changes[0]["old"].as<std::string>() == "0.002");
  CHECK(changes[0]["new"].as<std::string>() == "0.001");
  CHECK(changes[1]["key"].as<std::string>() == "train.warmup");
  CHECK(changes[1]["new"].as<std::string>() == "3");
  CHECK(changes[2]["old"].as<std::string>() == "0.001");
  CHECK(changes[2]["new"].as<std::string>() == "0.0005");
  CHECK_FALSE(changes[2]["resumed"].as<std::string>().empty());
}

TEST_CASE("resuming with a changed key other than the learning rate names it and writes nothing") {
  TempFolder folder;
  const auto path = folder / "run";
  {
    tinct::RunLifecycle run({"pretrain", path, false, false, "config: pretrain\ntrain: {lr: 0.002, batch: 8}\n", 1});
    run.execute([] { return tinct::RunOutcome{tinct::RunStatus::stopped, "stopped after step 2"}; });
  }
  const std::string before = read_text(path / "run.yaml");
  try {
    tinct::RunLifecycle({"pretrain", path, false, true, "config: pretrain\ntrain: {lr: 0.001, batch: 16}\n", 1});
    FAIL("expected an error");
  } catch (const tinct::Error& e) {
    CHECK(e.exit_code() == 2);
    CHECK_THAT(e.what(), Contains("train.batch (8 -> 16)") && Contains("only the learning rate"));
    CHECK_THAT(e.what(), !Contains("train.lr ("));
  }
  CHECK(read_text(path / "run.yaml") == before);
}

TEST_CASE("archives round-trip a model's description and name their kind when misplaced") {
  TempFolder folder;
  tinct::ModelSpec spec;
  spec.encoder.bands = 2;
  spec.encoder.width = 0.5;
  tinct::BandNormalisation normalisation{{"nir", "swir"}, {0.25, 0.125}, {0.0625, 0.1}};
  torch::nn::Linear weights(2, 2);
  tinct::ArchiveWriter writer(tinct::ArchiveKind::encoder);
  writer.module("encoder", *weights);
  writer.description(spec, normalisation, 32);
  writer.save(folder / "encoder.pt");

  tinct::ArchiveReader reader(folder / "encoder.pt", tinct::ArchiveKind::encoder);
  CHECK(reader.version() == tinct::kArchiveVersion);
  CHECK(reader.model_spec() == spec);
  tinct::BandNormalisation read;
  int chip_size = 0;
  reader.inputs(read, chip_size);
  CHECK(read.bands == normalisation.bands);
  CHECK(read.mean == normalisation.mean);
  CHECK(read.std == normalisation.std);
  CHECK(chip_size == 32);
  CHECK_THROWS_WITH(reader.text("classes"), Contains("encoder.pt: classes is missing"));

  try {
    tinct::ArchiveReader wrong(folder / "encoder.pt", tinct::ArchiveKind::classifier);
    FAIL("expected a refusal");
  } catch (const tinct::Error& e) {
    CHECK(e.exit_code() == 2);
    CHECK_THAT(e.what(), Contains("is the encoder.pt of a pretrain run, not the model.pt of a finetune run"));
  }
  CHECK_THROWS_WITH(tinct::read_checkpoint_info(folder / "encoder.pt"), Contains("not the training checkpoint"));
}

TEST_CASE("archives of format 1 are read by their keys, newer formats are refused") {
  TempFolder folder;
  torch::nn::Linear weights(2, 2);
  {
    torch::serialize::OutputArchive archive, nested;  // model.pt as format 1 wrote it: no kind
    weights->save(nested);
    archive.write("format_version", c10::IValue(std::int64_t{1}));
    archive.write("weights", nested);
    archive.save_to((folder / "model.pt").string());
  }
  CHECK_THROWS_WITH(tinct::ArchiveReader(folder / "model.pt", tinct::ArchiveKind::encoder),
                    Contains("is the model.pt of a finetune run, not the encoder.pt"));
  CHECK(tinct::ArchiveReader(folder / "model.pt", tinct::ArchiveKind::classifier).version() == 1);
  {
    torch::serialize::OutputArchive archive;
    archive.write("format_version", c10::IValue(tinct::kArchiveVersion + 1));
    archive.write("kind", c10::IValue(std::string("encoder")));
    archive.save_to((folder / "future.pt").string());
  }
  CHECK_THROWS_WITH(tinct::ArchiveReader(folder / "future.pt", tinct::ArchiveKind::encoder),
                    Contains("written by a newer tinct"));
  tinct::testing::TempFolder other;
  const auto text = other.write("notes.pt", "plain text");
  CHECK_THROWS_WITH(tinct::ArchiveReader(text, tinct::ArchiveKind::encoder), Contains("not a readable tinct archive"));
}

TEST_CASE("a save that fails (file size limit, as on a full disk) leaves no temporary and says the free space") {
  TempFolder folder;
  const auto target = folder / "checkpoints" / "step-00000001.pt";
  const int status = in_child([&] {
    ::signal(SIGXFSZ, SIG_IGN);  // writes past the limit fail with EFBIG instead
    const rlimit limit{4096, 4096};
    ::setrlimit(RLIMIT_FSIZE, &limit);
    torch::nn::Linear big(256, 256);  // 256 KB of weights
    torch::optim::SGD optimizer(big->parameters(), 0.1);
    try {
      tinct::save_checkpoint(target, *big, optimizer, {1, "spec", "hash", {}});
    } catch (const tinct::Error& e) {
      const std::string message = e.what();
      const bool named = message.find("cannot write " + target.string()) != std::string::npos &&
                         message.find(" free on the file system of") != std::string::npos;
      ::_exit(named && e.exit_code() == 1 ? 3 : 4);
    }
    ::_exit(5);
  });
  REQUIRE(WIFEXITED(status));
  CHECK(WEXITSTATUS(status) == 3);
  CHECK_FALSE(std::filesystem::exists(target));
  CHECK(std::filesystem::is_empty(target.parent_path()));  // the temporary is gone too
}

TEST_CASE("an archive carries its SHA-256: flipped bytes anywhere or a cut end fail naming the file") {
  TempFolder folder;
  torch::nn::Linear weights(64, 64);
  tinct::ArchiveWriter writer(tinct::ArchiveKind::encoder);
  writer.module("encoder", *weights);
  writer.save(folder / "encoder.pt");
  const std::string good = read_text(folder / "encoder.pt");
  REQUIRE(good.size() > 16384);
  // The trailer is a zip comment (PKWARE APPNOTE 4.3.16: end record, comment length at
  // offset 20): "tinct-sha256:" and 64 hex digits.
  CHECK(good.substr(good.size() - 77, 13) == "tinct-sha256:");
  CHECK(good.substr(good.size() - 99, 4) == std::string("PK\x05\x06"));
  CHECK(static_cast<unsigned char>(good[good.size() - 79]) == 77);
  CHECK(tinct::ArchiveReader(folder / "encoder.pt", tinct::ArchiveKind::encoder).version() == 3);

  const auto damaged = [&](const std::string& bytes) {
    const auto file = folder / "damaged.pt";
    std::ofstream(file, std::ios::binary) << bytes;
    try {
      tinct::ArchiveReader reader(file, tinct::ArchiveKind::encoder);
      torch::nn::Linear loaded(64, 64);
      reader.module("encoder", *loaded);
      return std::string("loaded");
    } catch (const tinct::Error& e) {
      return std::to_string(e.exit_code()) + " " + e.what();
    }
  };
  for (const std::size_t at : {std::size_t{100}, good.size() / 2, good.size() - 120, good.size() - 40}) {
    std::string bytes = good;
    for (std::size_t i = at; i < at + 8 && i < bytes.size(); ++i) bytes[i] = static_cast<char>(bytes[i] ^ 0x5a);
    const std::string message = damaged(bytes);
    INFO("flipped at " << at << ": " << message);
    CHECK((message.rfind("1 " + (folder / "damaged.pt").string() + " is damaged", 0) == 0 ||
           message.rfind("1 " + (folder / "damaged.pt").string() + ": not a readable tinct archive", 0) == 0));
  }
  // Cut short: the trailer or the zip's own end record is gone (which message depends on where).
  for (const std::size_t keep : {good.size() - 50, good.size() / 2}) {
    const std::string message = damaged(good.substr(0, keep));
    INFO("cut to " << keep << ": " << message);
    CHECK(message.rfind("1 " + (folder / "damaged.pt").string(), 0) == 0);
  }
}

TEST_CASE("a checkpoint restores the random generator, so dropout continues identically") {
  TempFolder folder;
  torch::manual_seed(11);
  torch::nn::Linear model(2, 1);
  torch::optim::AdamW optimizer(model->parameters());
  const auto file = tinct::checkpoint_path(folder.path(), 3);
  tinct::save_checkpoint(file, *model, optimizer, {3, "spec", "hash", {{"best_f1", 0.625}, {"best_epoch", 2}}});
  const torch::Tensor next = torch::rand({4});
  torch::rand({100});  // the generator moves on
  const tinct::CheckpointInfo info = tinct::load_checkpoint(file, *model, optimizer);
  CHECK(torch::equal(torch::rand({4}), next));
  CHECK(info.step == 3);
  CHECK(info.loop_state.at("best_f1") == 0.625);
  CHECK(info.loop_state.at("best_epoch") == 2);
}
