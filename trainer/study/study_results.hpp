// A study's finished runs read back from their folders: test predictions, calibration on
// the validation chips (written as calibration.json into each run), metrics and training
// curves. Also checks the paired design: every run of a cell must hold the same test chips.
#pragma once

#include <string>
#include <vector>

#include "assess/classification_metrics.hpp"
#include "study/prediction_table.hpp"
#include "study/run_calibration.hpp"
#include "study/study_execution.hpp"
#include "study/study_plan.hpp"
#include "study/study_report.hpp"

namespace tinct {

struct CollectedRun {
  std::size_t index = 0;  // in StudyPlan::runs
  PredictionTable test;
  RunCalibration calibration;
  ClassificationMetrics metrics;  // of the test predictions
  std::vector<CurvePoint> curve;  // fine-tunes: metrics.csv
};

struct CollectedStudy {
  std::vector<CollectedRun> runs;  // the runs that finished, in plan order
  std::vector<FailedRun> failed;
  std::vector<std::string> classes;
  std::vector<double> labels_per_class_seen;  // per budget: mean training chips per class
  double test_train_ratio = 0;                // mean test chips / mean training chips of a run
};

CollectedStudy collect_study(const StudyPlan& plan, const std::vector<RunState>& states);

}  // namespace tinct
