#include "study/run_calibration.hpp"

#include <algorithm>
#include <cmath>

#include "assess/classification_metrics.hpp"
#include "util/error.hpp"

namespace tinct {
namespace {

// A probability of 0 (a forest's vote share, or an underflow) would be an infinite logit.
constexpr double kSmallestProbability = 1e-12;

std::vector<std::vector<double>> log_probabilities(const std::vector<std::vector<double>>& probabilities) {
  std::vector<std::vector<double>> logits = probabilities;
  for (auto& row : logits) {
    for (double& value : row) value = std::log(std::max(value, kSmallestProbability));
  }
  return logits;
}

}  // namespace

RunCalibration calibrate_run(const PredictionTable& validation, const PredictionTable& test) {
  if (validation.size() == 0) fail_runtime("no validation chips to calibrate on");
  RunCalibration result;
  result.validation_chips = static_cast<std::int64_t>(validation.size());
  result.fit = fit_temperature(log_probabilities(validation.probabilities), validation.truth);
  result.calibrated = apply_temperature(log_probabilities(test.probabilities), result.fit.temperature);
  result.ece_before = expected_calibration_error(test.truth, test.probabilities);
  result.ece_after = expected_calibration_error(test.truth, result.calibrated);
  return result;
}

Json calibration_json(const RunCalibration& c) {
  Json json;
  json["method"] = "temperature scaling on the validation chips (Guo et al. 2017)";
  json["temperature"] = json_number(c.fit.temperature);
  json["temperature_at_search_bound"] = c.fit.at_bound;
  json["validation_chips"] = c.validation_chips;
  json["validation_nll_before"] = json_number(c.fit.nll_before);
  json["validation_nll_after"] = json_number(c.fit.nll_after);
  json["test_ece_before"] = json_number(c.ece_before);
  json["test_ece_after"] = json_number(c.ece_after);
  return json;
}

}  // namespace tinct
