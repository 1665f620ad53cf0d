#include "study/study_results.hpp"

#include <cstdlib>
#include <map>
#include <tuple>

#include "finetune/run_chips.hpp"
#include "labels/csv_table.hpp"
#include "util/atomic_file.hpp"
#include "util/error.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

struct CellChips {
  std::vector<std::string> test_ids;
  double train = 0, test = 0, classes = 1;
};

std::string chip_id(const ChipCollection& chips, const ChipRef& ref) {
  const ChipRecord r = chips.store(ref.store).record(ref.chip);
  return r.source_id.empty() ? std::to_string(r.index) : r.source_id;
}

CellChips cell_chips(const FinetuneConfig& config) {
  const RunChips chips = run_chips(config);
  CellChips cell;
  for (const ChipRef& ref : chips.split.test) cell.test_ids.push_back(chip_id(chips.chips, ref));
  cell.train = static_cast<double>(chips.train.size());
  cell.test = static_cast<double>(chips.split.test.size());
  cell.classes = static_cast<double>(chips.chips.classes().size());
  return cell;
}

std::vector<CurvePoint> read_curve(const fs::path& metrics_csv) {
  std::vector<CurvePoint> curve;
  if (!fs::exists(metrics_csv)) return curve;
  const CsvTable table = read_csv_table(metrics_csv);
  const auto epoch = table.column("epoch"), loss = table.column("loss"), f1 = table.column("val_macro_f1");
  if (!epoch || !loss) return curve;
  for (const CsvRow& row : table.rows) {
    CurvePoint point;
    point.epoch = std::atoi(row.fields[*epoch].c_str());
    point.loss = std::strtod(row.fields[*loss].c_str(), nullptr);
    if (f1 && !row.fields[*f1].empty()) point.validation_f1 = std::strtod(row.fields[*f1].c_str(), nullptr);
    curve.push_back(point);
  }
  return curve;
}

FailedRun failed_run(const PlannedRun& run, const std::string& message) {
  return {run.arm, run.cell.budget, run.cell.seed, run.cell.fold, message};
}

CollectedRun read_run(const StudyPlan& plan, std::size_t index) {
  const PlannedRun& run = plan.runs[index];
  const fs::path folder = plan.folder / run.folder;
  CollectedRun result;
  result.index = index;
  result.test = read_prediction_table(folder / "predictions.csv");
  result.calibration = calibrate_run(read_prediction_table(folder / "validation" / "predictions.csv"), result.test);
  write_file_atomic(folder / "calibration.json", json_text(calibration_json(result.calibration), 2) + "\n");
  result.metrics = classification_metrics(result.test.truth, result.test.predicted,
                                          static_cast<int>(result.test.classes.size()), result.test.probabilities);
  if (run.kind == PlannedKind::deep) result.curve = read_curve(folder / "metrics.csv");
  return result;
}

}  // namespace

CollectedStudy collect_study(const StudyPlan& plan, const std::vector<RunState>& states) {
  CollectedStudy study;
  std::map<std::tuple<std::size_t, int, int>, CellChips> cells;
  std::vector<double> train_sum(plan.config.budgets.size(), 0), train_count(plan.config.budgets.size(), 0);
  double train_total = 0, test_total = 0;
  for (const PlannedRun& run : plan.runs) {
    const auto key = std::make_tuple(run.cell.budget, run.cell.seed, run.cell.fold);
    if (cells.count(key)) continue;
    const CellChips& cell = cells[key] = cell_chips(run.finetune);
    train_sum[run.cell.budget] += cell.train / cell.classes;
    train_count[run.cell.budget] += 1;
    train_total += cell.train, test_total += cell.test;
  }
  for (std::size_t b = 0; b < train_sum.size(); ++b) {
    study.labels_per_class_seen.push_back(train_count[b] ? train_sum[b] / train_count[b] : 0);
  }
  study.test_train_ratio = train_total > 0 ? test_total / train_total : 0;

  for (std::size_t i = 0; i < plan.runs.size(); ++i) {
    const PlannedRun& run = plan.runs[i];
    if (!states[i].ok) {
      study.failed.push_back(failed_run(run, states[i].message));
      continue;
    }
    try {
      CollectedRun collected = read_run(plan, i);
      const CellChips& cell = cells.at(std::make_tuple(run.cell.budget, run.cell.seed, run.cell.fold));
      if (collected.test.ids != cell.test_ids) {
        fail_runtime("its test chips differ from the other arms' in this cell, so it cannot be paired with them "
                     "(does the arm override the label stores?)");
      }
      if (study.classes.empty()) study.classes = collected.test.classes;
      study.runs.push_back(std::move(collected));
    } catch (const std::exception& error) {
      study.failed.push_back(failed_run(run, error.what()));
    }
  }
  return study;
}

}  // namespace tinct
