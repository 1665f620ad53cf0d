// A finetune run with a label budget reads no labelled chip beyond it: the chip
// collection counts the distinct chips whose bands are read (training batches and
// validation) before the test, and that count stays within budget x classes. The split
// (split.csv) and the test set do not move with the training seed; training does.
#include <catch2/catch.hpp>

#include <fstream>
#include <map>
#include <set>
#include <sstream>
#include <string>

#include "finetune/finetune_config.hpp"
#include "finetune/finetune_job.hpp"
#include "runs/torch_runtime.hpp"
#include "runs_from_text.hpp"
#include "temp_folder.hpp"
#include "tiny_stores.hpp"
#include "util/config_node.hpp"

using tinct::testing::read_text;
using tinct::testing::run_finetune_yaml;
using tinct::testing::TempFolder;

namespace {

std::string finetune_yaml(const std::string& output, const std::string& budget, int train_seed) {
  return "config: finetune\nstores: [tiny.labels]\noutput: " + output +
         "\ninit: {from: scratch, model: {encoder: compact, width: 0.5}}\n"
         "split: {method: blocks, block_size: 300, folds: 3, fold: 1, seed: 4}\n" + budget +
         "train: {epochs: 3, batch: 4, lr: 0.003, seed: " + std::to_string(train_seed) + ", patience: 10}\n";
}

// role -> rows of split.csv (the role is the 10th of 11 fields; no field here holds a comma)
std::map<std::string, int> roles_in(const std::filesystem::path& split_csv) {
  std::map<std::string, int> roles;
  std::istringstream lines(read_text(split_csv));
  std::string line;
  std::getline(lines, line);
  while (std::getline(lines, line)) {
    std::vector<std::string> fields;
    std::istringstream cells(line);
    for (std::string cell; std::getline(cells, cell, ',');) fields.push_back(cell);
    if (line.back() == ',') fields.emplace_back();
    REQUIRE(fields.size() == 11);
    ++roles[fields[9]];
  }
  return roles;
}

std::set<std::string> test_ids(const std::filesystem::path& predictions_csv) {
  std::set<std::string> ids;
  std::istringstream lines(read_text(predictions_csv));
  std::string line;
  std::getline(lines, line);
  while (std::getline(lines, line)) ids.insert(line.substr(0, line.find(',')));
  return ids;
}

}  // namespace

TEST_CASE("a budget of N per class reads at most N x classes labelled chips before the test") {
  tinct::configure_threads(1);
  TempFolder folder;
  tinct::testing::write_tiny_label_store(folder / "tiny.labels", 10);  // 100 chips, 2 classes
  const tinct::FinetuneResult budgeted = run_finetune_yaml(folder, finetune_yaml("runs/five", "budget: {per_class: 5}\n", 1));
  const auto roles = roles_in(folder / "runs/five/split.csv");
  CHECK(roles.at("train") + roles.at("validation") == 10);
  CHECK(budgeted.labelled_chips_read == 10);  // 5 x 2 classes, every one of them read
  CHECK(roles.at("unused") > 0);

  // Without a budget, the tally is every training and validation chip: the count is real.
  const tinct::FinetuneResult all = run_finetune_yaml(folder, finetune_yaml("runs/all", "budget: all\n", 1));
  const auto every = roles_in(folder / "runs/all/split.csv");
  CHECK(all.labelled_chips_read == every.at("train") + every.at("validation"));
  CHECK(all.labelled_chips_read > 10);
  CHECK(every.at("test") == roles.at("test"));

  // A linear probe with l2 by inner cross-validation fits its folds on the budget alone.
  const tinct::FinetuneResult probe = run_finetune_yaml(
      folder, finetune_yaml("runs/probe", "budget: {per_class: 5}\nhead: {pool: centre, kind: linear_probe}\n", 1));
  CHECK(probe.labelled_chips_read == 10);
  CHECK(read_text(folder / "runs/probe/run.yaml").find("l2_chosen_by: inner_cv") != std::string::npos);
}

TEST_CASE("the training seed changes training only: split.csv and the test set stay") {
  tinct::configure_threads(1);
  TempFolder folder;
  tinct::testing::write_tiny_label_store(folder / "tiny.labels", 10);
  run_finetune_yaml(folder, finetune_yaml("runs/seed1", "budget: {per_class: 6}\n", 1));
  run_finetune_yaml(folder, finetune_yaml("runs/seed2", "budget: {per_class: 6}\n", 2));
  CHECK(read_text(folder / "runs/seed1/split.csv") == read_text(folder / "runs/seed2/split.csv"));
  CHECK(test_ids(folder / "runs/seed1/predictions.csv") == test_ids(folder / "runs/seed2/predictions.csv"));
  CHECK(read_text(folder / "runs/seed1/metrics.csv") != read_text(folder / "runs/seed2/metrics.csv"));
  // The budget's own seed draws other labels; the test set still stays.
  run_finetune_yaml(folder, finetune_yaml("runs/draw", "budget: {per_class: 6, seed: 9}\n", 1));
  CHECK(read_text(folder / "runs/seed1/split.csv") != read_text(folder / "runs/draw/split.csv"));
  CHECK(test_ids(folder / "runs/seed1/predictions.csv") == test_ids(folder / "runs/draw/predictions.csv"));
}
