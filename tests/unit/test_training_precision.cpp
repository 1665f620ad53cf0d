// train.precision: a bf16 pretrain ends within 2 % of the fp32 run's validation delta E
// after the same steps (the accuracy goal of the bf16 default), and run.yaml says what was
// asked, what was used and why; auto follows the processor's flags as /proc/cpuinfo lists
// them (read here independently of tinct).
#include <torch/torch.h>
#undef CHECK
#include <catch2/catch.hpp>
#include <yaml-cpp/yaml.h>

#include <fstream>
#include <sstream>
#include <string>

#include "pretrain/pretrain_config.hpp"
#include "pretrain/pretrain_job.hpp"
#include "runs/torch_runtime.hpp"
#include "runs_from_text.hpp"
#include "temp_folder.hpp"
#include "tiny_stores.hpp"
#include "util/config_node.hpp"

using tinct::testing::TempFolder;

namespace {

void pretrain(const TempFolder& folder, const std::string& output, const std::string& precision) {
  const std::string yaml = "config: pretrain\nstores: [tiny.pairs]\noutput: " + output +
                           "\nmodel: {encoder: compact, width: 0.5}\n"
                           "train: {steps: 40, batch: 8, lr: 0.003, warmup: 4, log_every: 10, seed: 2, precision: " +
                           precision + "}\nvalidation: {every: 40, chips: 16, previews: 0}\n"
                           "checkpoints: {every: 40, keep: 1}\n";
  tinct::testing::run_pretrain_yaml(folder, yaml);
}

// The last row's validation delta E of a run's metrics.csv.
double final_delta_e(const std::filesystem::path& metrics_csv) {
  std::ifstream in(metrics_csv);
  std::string header, line, last;
  std::getline(in, header);
  while (std::getline(in, line)) last = line;
  std::stringstream names(header), values(last);
  for (std::string name, value; std::getline(names, name, ',') && std::getline(values, value, ',');) {
    if (name == "val_delta_e") return std::stod(value);
  }
  FAIL("no val_delta_e column in " << metrics_csv);
  return 0;
}

bool cpuinfo_lists_native_bf16() {
  std::ifstream in("/proc/cpuinfo");
  std::string line;
  while (std::getline(in, line)) {
    if (line.rfind("flags", 0) == 0) {
      return line.find(" avx512_bf16") != std::string::npos || line.find(" amx_bf16") != std::string::npos;
    }
  }
  return false;
}

}  // namespace

TEST_CASE("a bf16 pretrain ends within 2 percent of the fp32 run's validation delta E") {
  tinct::configure_threads(1);
  TempFolder folder;
  tinct::testing::write_tiny_pair_store(folder / "tiny.pairs", 48);
  pretrain(folder, "runs/fp32", "fp32");
  pretrain(folder, "runs/bf16", "bf16");
  const double fp32 = final_delta_e(folder / "runs/fp32/metrics.csv");
  const double bf16 = final_delta_e(folder / "runs/bf16/metrics.csv");
  INFO("validation delta E after 40 steps: fp32 " << fp32 << ", bf16 " << bf16);
  CHECK(bf16 == Approx(fp32).epsilon(0.02));
  CHECK(bf16 != fp32);  // the two runs did differ in their arithmetic

  const YAML::Node asked = YAML::LoadFile((folder / "runs/bf16/run.yaml").string())["precision"];
  CHECK(asked["requested"].as<std::string>() == "bf16");
  CHECK(asked["used"].as<std::string>() == "bf16");
  const YAML::Node plain = YAML::LoadFile((folder / "runs/fp32/run.yaml").string())["precision"];
  CHECK(plain["used"].as<std::string>() == "fp32");
}

TEST_CASE("precision auto takes bf16 exactly where the processor lists native bf16") {
  tinct::configure_threads(1);
  TempFolder folder;
  tinct::testing::write_tiny_pair_store(folder / "tiny.pairs", 24);
  pretrain(folder, "runs/auto", "auto");
  const YAML::Node precision = YAML::LoadFile((folder / "runs/auto/run.yaml").string())["precision"];
  CHECK(precision["requested"].as<std::string>() == "auto");
  CHECK(precision["used"].as<std::string>() == (cpuinfo_lists_native_bf16() ? "bf16" : "fp32"));
  CHECK(precision["why"].as<std::string>().rfind("auto: ", 0) == 0);
}
