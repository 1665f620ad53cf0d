// Fitting a probe head (head kinds linear_probe and knn) on the frozen features of the
// budgeted training chips: no epochs and no validation chips, so the label budget bounds
// every label the fit sees. The linear probe is a multinomial logistic regression on
// standardised features minimising sum_i w_i CE_i + l2 / 2 |W|^2 (the intercept free;
// scikit-learn's LogisticRegression with C = 1 / l2), solved by L-BFGS; with l2 auto, l2 is
// the grid value with the lowest held-out log loss in stratified inner cross-validation.
#pragma once

#include <yaml-cpp/yaml.h>

#include <cstdint>
#include <filesystem>
#include <string>
#include <vector>

#include "batches/chip_collection.hpp"
#include "models/classifier_model.hpp"

namespace tinct {

struct ProbeFit {
  std::int64_t features = 0;               // readout features the probe was fitted on
  double l2 = 0;                           // linear_probe: the weight used
  std::vector<double> l2_grid, cv_log_loss;  // with l2 auto: the grid and each value's inner-CV loss
  int inner_folds = 0;                     // 0: no inner cross-validation
  std::vector<int> inner_fold;             // with inner CV: each training row's held-out fold
  std::string chosen_by;                   // linear_probe: inner_cv, given or default
};

// The fit as run.yaml keeps it (probe: readout features, l2, how it was chosen, the grid and
// each grid value's inner-CV log loss).
YAML::Node probe_record(const ProbeFit& fit);

// Features of `refs` in inference mode: (N, readout_features) float32.
torch::Tensor extract_features(ClassifierModel& model, const ChipCollection& chips, const std::vector<ChipRef>& refs,
                               int batch);

// Fits model's probe head on `train`; class_weights (K) weigh each row by its class.
ProbeFit fit_probe(ClassifierModel& model, const ChipCollection& chips, const std::vector<ChipRef>& train,
                   const torch::Tensor& class_weights, int batch, std::uint64_t seed);

// features.csv: role (train or test), chip (index in its store), store, class, inner_fold
// (a training row's held-out fold in the probe's inner cross-validation, empty otherwise) and
// the raw features f0... of every chip, so outside tools can fit and cross-validate on
// exactly what the probe saw.
void write_probe_features(const std::filesystem::path& file, ClassifierModel& model, const ChipCollection& chips,
                          const std::vector<ChipRef>& train, const std::vector<ChipRef>& test, int batch,
                          const std::vector<int>& inner_fold);

}  // namespace tinct
