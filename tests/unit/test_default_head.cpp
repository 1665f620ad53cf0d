// The built-in default head (finetune/default_head.hpp) on real runs: a short pretrain on the
// tiny pair store (Lab by smooth-l1, or ab bins), then finetune configs read and run on the
// tiny label store. Without head.pool or head.kind a run from the Lab pretrain run gets the
// colour + bands linear probe; scratch and ab-bins runs get the trained global head; an
// explicit head wins; the resolved config and run.yaml record what was chosen and why.
#include <torch/torch.h>
#undef CHECK
#include <catch2/catch.hpp>

#include <string>

#include "finetune/finetune_config.hpp"
#include "finetune/finetune_job.hpp"
#include "pretrain/pretrain_config.hpp"
#include "pretrain/pretrain_job.hpp"
#include "runs/torch_runtime.hpp"
#include "runs_from_text.hpp"
#include "temp_folder.hpp"
#include "tiny_stores.hpp"
#include "util/config_node.hpp"
#include "util/error.hpp"

using Catch::Matchers::Contains;
using tinct::HeadKind;
using tinct::HeadPool;
using tinct::testing::read_finetune_yaml;
using tinct::testing::read_text;
using tinct::testing::run_finetune_yaml;
using tinct::testing::TempFolder;

namespace {

// Two steps are enough: the default depends on what the run is, not on how well it learnt.
void pretrain(const TempFolder& folder, const std::string& output, const std::string& loss) {
  const std::string yaml = "config: pretrain\nstores: [tiny.pairs]\noutput: " + output +
                           "\nmodel: {encoder: compact, width: 0.5}\nloss: " + loss +
                           "\ntrain: {steps: 2, batch: 4, lr: 0.003, warmup: 1, seed: 5, precision: fp32}\n"
                           "validation: {every: 2, chips: 8, previews: 0}\ncheckpoints: {every: 2, keep: 1}\n";
  tinct::testing::run_pretrain_yaml(folder, yaml);
}

// A folder with the tiny stores and two pretrain runs: runs/lab (smooth-l1) and runs/bins.
struct Project {
  TempFolder folder;
  Project() {
    tinct::configure_threads(1);
    tinct::testing::write_tiny_pair_store(folder / "tiny.pairs", 24);
    tinct::testing::write_tiny_label_store(folder / "tiny.labels", 10);  // 100 chips, 2 classes
    pretrain(folder, "runs/lab", "{kind: smooth_l1}");
    pretrain(folder, "runs/bins", "{kind: ab_bins, ab_bins_per_axis: 4}");
  }
};

std::string finetune_yaml(const std::string& output, const std::string& init, const std::string& head = "") {
  return "config: finetune\nstores: [tiny.labels]\noutput: " + output + "\ninit: " + init + "\n" + head +
         "split: {method: blocks, block_size: 300, folds: 3, fold: 1, seed: 4}\nbudget: {per_class: 5}\n"
         "train: {epochs: 2, batch: 4, lr: 0.003, seed: 1, patience: 10}\n";
}

bool has(const std::string& text, const std::string& part) { return text.find(part) != std::string::npos; }

}  // namespace

TEST_CASE("without head.pool or head.kind a Lab pretrain run gives the colour + bands linear probe", "[default_head]") {
  Project project;
  const TempFolder& folder = project.folder;
  const auto read_back = read_finetune_yaml(folder, finetune_yaml("runs/tune", "{from: pretrain, run: runs/lab}"));
  const tinct::FinetuneConfig& c = read_back.config;
  CHECK(c.head.pool == HeadPool::colour);
  CHECK(c.head.kind == HeadKind::linear_probe);
  CHECK(c.head.input_bands);
  CHECK(c.head.colour_channels == 0);
  CHECK(c.head_choice.by_default);
  CHECK_THAT(tinct::head_choice_line(c.head, c.head_choice),
             Contains("head: default {pool: colour, kind: linear_probe, input_bands: true} because") &&
                 Contains("predicts Lab"));
  // The resolved config (what tinct check prints and the run saves) names the head in full.
  CHECK(has(read_back.resolved, "pool: colour"));
  CHECK(has(read_back.resolved, "kind: linear_probe"));
  CHECK(has(read_back.resolved, "input_bands: true"));
  // Read again from its own resolved config, the same head, now as configured.
  const auto again = read_finetune_yaml(folder, read_back.resolved);
  CHECK(again.config.head.pool == HeadPool::colour);
  CHECK(again.config.head.input_bands);
  CHECK_FALSE(again.config.head_choice.by_default);

  // l2 tunes the default probe; it does not make the head explicit.
  const auto tuned = read_finetune_yaml(folder, finetune_yaml("runs/tuned", "{from: pretrain, run: runs/lab}", "head: {l2: 0.5}\n"));
  CHECK(tuned.config.head.pool == HeadPool::colour);
  CHECK(tuned.config.head.l2 == 0.5);
  CHECK(tuned.config.head_choice.by_default);

  // The run: fitted as a probe on the predicted colour and 3 input bands, run.yaml says why.
  run_finetune_yaml(folder, finetune_yaml("runs/tune", "{from: pretrain, run: runs/lab}"));
  const std::string run_yaml = read_text(folder / "runs/tune/run.yaml");
  CHECK(has(run_yaml, "chosen_by: default"));
  CHECK(has(run_yaml, "pool: colour"));
  CHECK(has(run_yaml, "input_bands: true"));
  CHECK(has(run_yaml, "readout_features: 6"));  // 3 Lab + 3 bands
  CHECK(std::filesystem::exists(folder / "runs/tune/features.csv"));
  CHECK(std::filesystem::exists(folder / "runs/tune/metrics.json"));
}

TEST_CASE("scratch runs and ab-bins pretrain runs keep the trained global head by default", "[default_head]") {
  Project project;
  const TempFolder& folder = project.folder;
  for (const std::string init : {"{from: scratch, run: runs/lab}", "{from: scratch, model: {encoder: compact, width: 0.5}}"}) {
    INFO(init);
    const tinct::FinetuneConfig c = read_finetune_yaml(folder, finetune_yaml("runs/scratch", init)).config;
    CHECK(c.head.pool == HeadPool::global);
    CHECK(c.head.kind == HeadKind::trained);
    CHECK(c.head_choice.by_default);
    CHECK_THAT(c.head_choice.reason, Contains("scratch"));
  }
  const auto bins = read_finetune_yaml(folder, finetune_yaml("runs/bins-tune", "{from: pretrain, run: runs/bins}"));
  CHECK(bins.config.head.pool == HeadPool::global);
  CHECK(bins.config.head.kind == HeadKind::trained);
  CHECK(bins.config.head_choice.by_default);
  CHECK_THAT(bins.config.head_choice.reason, Contains("ab_bins"));
  CHECK(has(bins.resolved, "pool: global"));
  CHECK(has(bins.resolved, "dropout:"));  // a trained head's keys, filled in

  run_finetune_yaml(folder, finetune_yaml("runs/scratch", "{from: scratch, run: runs/lab}"));
  const std::string run_yaml = read_text(folder / "runs/scratch/run.yaml");
  CHECK(has(run_yaml, "chosen_by: default"));
  CHECK(has(run_yaml, "pool: global"));
  CHECK(has(run_yaml, "kind: trained"));
  CHECK(has(run_yaml, "from scratch"));
  CHECK(std::filesystem::exists(folder / "runs/scratch/metrics.csv"));  // trained for its epochs
}

TEST_CASE("an explicit head wins over the default, and a trained head's keys ask for one", "[default_head]") {
  Project project;
  const TempFolder& folder = project.folder;
  const std::string lab = "{from: pretrain, run: runs/lab}";
  const tinct::FinetuneConfig knn = read_finetune_yaml(folder, finetune_yaml("runs/knn", lab, "head: {pool: centre, kind: knn}\n")).config;
  CHECK(knn.head.pool == HeadPool::centre);
  CHECK(knn.head.kind == HeadKind::knn);
  CHECK_FALSE(knn.head_choice.by_default);
  // A named pool keeps the other keys' own defaults: trained, without the input bands.
  const tinct::FinetuneConfig colour = read_finetune_yaml(folder, finetune_yaml("runs/colour", lab, "head: {pool: colour}\n")).config;
  CHECK(colour.head.kind == HeadKind::trained);
  CHECK_FALSE(colour.head.input_bands);
  const tinct::FinetuneConfig global = read_finetune_yaml(folder, finetune_yaml("runs/global", lab, "head: {kind: trained}\n")).config;
  CHECK(global.head.pool == HeadPool::global);
  const tinct::FinetuneConfig dropout = read_finetune_yaml(folder, finetune_yaml("runs/dropout", lab, "head: {dropout: 0.3}\n")).config;
  CHECK(dropout.head.pool == HeadPool::global);
  CHECK(dropout.head.kind == HeadKind::trained);
  CHECK(dropout.dropout == 0.3);
  CHECK_THAT(dropout.head_choice.reason, Contains("head.dropout"));

  run_finetune_yaml(folder, finetune_yaml("runs/knn", lab, "head: {pool: centre, kind: knn}\n"));
  const std::string run_yaml = read_text(folder / "runs/knn/run.yaml");
  CHECK(has(run_yaml, "chosen_by: config"));
  CHECK(has(run_yaml, "pool: centre"));
  CHECK_FALSE(has(run_yaml, "reason: the pretrain"));

  // A pretrain run that is not there: refused, saying what the default would be by rule.
  try {
    read_finetune_yaml(folder, finetune_yaml("runs/none", "{from: pretrain, run: runs/bins-missing}"));
    FAIL("expected a usage error");
  } catch (const tinct::Error& e) {
    CHECK(e.exit_code() == 2);
  }
  std::filesystem::create_directories(folder / "runs/unfinished");
  try {
    read_finetune_yaml(folder, finetune_yaml("runs/none", "{from: pretrain, run: runs/unfinished}"));
    FAIL("expected a usage error");
  } catch (const tinct::Error& e) {
    CHECK(e.exit_code() == 2);
    CHECK_THAT(std::string(e.what()), Contains("holds no encoder.pt") &&
                                          Contains("{pool: colour, kind: linear_probe, input_bands: true} when") &&
                                          Contains("else {pool: global, kind: trained}"));
  }
}
