#include "mapping/run_evidence.hpp"

#include <algorithm>
#include <map>
#include <random>
#include <set>

#include "batches/batch.hpp"
#include "finetune/finetune_config.hpp"
#include "inference/split_table.hpp"
#include "assess/temperature_scaling.hpp"
#include "runs/metrics_log.hpp"
#include "util/atomic_file.hpp"
#include "util/config_node.hpp"
#include "util/error.hpp"
#include "util/log.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

struct ChipOutputs {
  std::vector<float> logits, features;
};

ChipOutputs run_chips(WindowModel& model, const ChipCollection& chips, const std::vector<ChipRef>& refs, int batch) {
  const std::size_t k = model.classes().size(), f = static_cast<std::size_t>(model.feature_count());
  ChipOutputs out;
  out.logits.resize(refs.size() * k);
  out.features.resize(refs.size() * f);
  for (std::size_t start = 0; start < refs.size(); start += static_cast<std::size_t>(batch)) {
    const std::vector<ChipRef> part(refs.begin() + start, refs.begin() + std::min(refs.size(), start + batch));
    const Batch b = assemble_batch(chips, part, std::vector<int>(part.size(), 0));
    const torch::Tensor bands = b.bands.contiguous();
    model.exact(bands.data_ptr<float>(), static_cast<int>(part.size()), out.logits.data() + start * k,
                out.features.data() + start * f);
  }
  return out;
}

// The split's units (spatial blocks or groups) shuffled with the seed and dealt round-robin.
std::vector<int> fold_of_chips(const ChipCollection& chips, const std::vector<ChipRef>& refs,
                               const SplitSettings& split) {
  std::set<std::string> unique;
  std::vector<std::string> unit_of;
  for (const ChipRef& ref : refs) unit_of.push_back(split_unit(chips, ref, split));
  if (std::set<std::string>(unit_of.begin(), unit_of.end()).size() < 2) {
    log::warning("map: the training chips lie in one split unit; the area of applicability's folds are dealt chip "
                 "by chip, which makes its threshold optimistic (use smaller split blocks)");
    for (std::size_t i = 0; i < refs.size(); ++i) unit_of[i] = std::to_string(i);
  }
  unique.insert(unit_of.begin(), unit_of.end());
  std::vector<std::string> order(unique.begin(), unique.end());
  std::mt19937_64 random(split.seed ^ 0xA0AULL);
  std::shuffle(order.begin(), order.end(), random);
  const int folds = std::max(2, std::min<int>(split.folds, static_cast<int>(order.size())));
  std::map<std::string, int> fold;
  for (std::size_t i = 0; i < order.size(); ++i) fold[order[i]] = static_cast<int>(i % folds);
  std::vector<int> result;
  for (const auto& unit : unit_of) result.push_back(fold[unit]);
  return result;
}

std::vector<std::vector<double>> rows_of(const std::vector<float>& values, std::size_t columns) {
  std::vector<std::vector<double>> rows;
  for (std::size_t i = 0; i < values.size(); i += columns) rows.emplace_back(values.begin() + i, values.begin() + i + columns);
  return rows;
}

void fit_calibration(WindowModel& model, const ChipCollection& chips, const std::vector<ChipRef>& validation,
                     int batch, RunEvidence& evidence) {
  if (validation.empty()) return;
  const ChipOutputs outputs = run_chips(model, chips, validation, batch);
  std::vector<int> labels;
  for (const ChipRef& ref : validation) labels.push_back(chips.class_of(ref));
  const TemperatureFit fit = fit_temperature(rows_of(outputs.logits, model.classes().size()), labels);
  evidence.temperature = fit.temperature;
  evidence.calibrated = true;
  log::info("map: temperature " + metric_text(fit.temperature) + " fitted on " + std::to_string(validation.size()) +
            " validation chips (NLL " + metric_text(fit.nll_before) + " -> " + metric_text(fit.nll_after) + ")" +
            (fit.at_bound ? "; it lies at the end of the search range" : ""));
}

void fit_area(WindowModel& model, const ChipCollection& chips, const std::vector<ChipRef>& train,
              const SplitSettings& split, int batch, int threads, RunEvidence& evidence) {
  TrainingChipFeatures& t = evidence.training;
  t.features = run_chips(model, chips, train, batch).features;
  t.folds = fold_of_chips(chips, train, split);
  for (const ChipRef& ref : train) {
    const ChipRecord record = chips.store(ref.store).record(ref.chip);
    t.x.push_back(record.x);
    t.y.push_back(record.y);
  }
  evidence.applicability = fit_applicability(t.features, model.feature_count(), t.folds, {}, threads);
  log::info("map: area of applicability from " + std::to_string(train.size()) + " training chips, threshold " +
            metric_text(evidence.applicability->threshold));
}

struct RecordedSplit {
  std::vector<ChipRef> train, validation;
};

// The chips the run trained and validated on, as its split.csv recorded them (not drawn
// again, so a map always matches the run whatever the split code does later).
RecordedSplit recorded_split(const fs::path& file, const FinetuneConfig& config) {
  if (!fs::exists(file)) {
    fail_runtime(file.string() + ": not found; map needs the split the run recorded (set aoa: false to map "
                 "without the area of applicability and calibration, or fine-tune the run again)");
  }
  std::map<std::string, int> store_index;
  for (std::size_t i = 0; i < config.stores.size(); ++i) store_index[config.stores[i].string()] = static_cast<int>(i);
  RecordedSplit split;
  for (const SplitRow& row : read_split_table(file)) {
    const auto store = store_index.find(row.store);
    if (store == store_index.end()) {
      fail_runtime(file.string() + ": names store " + row.store + ", which the run's config does not list");
    }
    const ChipRef ref{store->second, row.index};
    if (row.role == "train") split.train.push_back(ref);
    if (row.role == "validation") split.validation.push_back(ref);
  }
  return split;
}

}  // namespace

RunEvidence gather_run_evidence(const fs::path& run, WindowModel& model, bool with_applicability, int batch,
                                int threads) {
  RunEvidence evidence;
  const ConfigNode root = ConfigNode::load(run / "config.resolved.yaml");
  FinetuneConfig config;
  try {
    config = read_finetune_config(root);
  } catch (const Error& e) {
    fail_runtime(std::string("reading the run's config.resolved.yaml to recover its split: ") + e.what() +
                 "; map needs the run's label stores as they were (set aoa: false to map without the area of "
                 "applicability and calibration)");
  }
  ChipCollection chips(config.stores);
  chips.use_normalisation(model.normalisation());
  const RecordedSplit split = recorded_split(run / "split.csv", config);
  fit_calibration(model, chips, split.validation, batch, evidence);
  if (with_applicability) fit_area(model, chips, split.train, config.split, batch, threads, evidence);
  return evidence;
}

void write_applicability_files(const fs::path& folder, const RunEvidence& evidence) {
  if (!evidence.applicability) return;
  const ApplicabilityModel& m = *evidence.applicability;
  const TrainingChipFeatures& t = evidence.training;
  std::string csv = "x,y,fold,training_index";
  for (int f = 0; f < m.features; ++f) csv += ",f" + std::to_string(f);
  csv += "\n";
  for (std::size_t i = 0; i < t.folds.size(); ++i) {
    csv += metric_text(t.x[i]) + "," + metric_text(t.y[i]) + "," + std::to_string(t.folds[i]) + "," +
           metric_text(m.training_index[i]);
    for (int f = 0; f < m.features; ++f) csv += "," + metric_text(t.features[i * m.features + f]);
    csv += "\n";
  }
  write_file_atomic(folder / "training_features.csv", csv);
  const std::string json = "{\n  \"weights\": \"none\",\n  \"mean_distance\": " + metric_text(m.mean_distance) +
                           ",\n  \"q1\": " + metric_text(m.q1) + ",\n  \"q3\": " + metric_text(m.q3) +
                           ",\n  \"whisker\": " + metric_text(m.whisker) + ",\n  \"threshold\": " +
                           metric_text(m.threshold) + ",\n  \"constant_features\": " +
                           std::to_string(m.constant_features) + ",\n  \"temperature\": " +
                           metric_text(evidence.temperature) + "\n}\n";
  write_file_atomic(folder / "aoa.json", json);
}

}  // namespace tinct
