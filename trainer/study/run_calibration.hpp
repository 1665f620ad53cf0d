// Temperature scaling of one study run (Guo et al. 2017): the temperature is fitted on the
// run's validation chips and applied to its test probabilities; ECE on the test chips before
// and after. Runs write probabilities, not logits: log p differs from the logits by a
// constant per chip, which softmax(z / T) ignores, so log p serves as the logits.
#pragma once

#include <cstdint>
#include <vector>

#include "assess/temperature_scaling.hpp"
#include "study/prediction_table.hpp"
#include "util/json_text.hpp"

namespace tinct {

struct RunCalibration {
  TemperatureFit fit;
  double ece_before = 0, ece_after = 0;            // test chips, top-label, 10 bins
  std::vector<std::vector<double>> calibrated;     // test probabilities at the fitted temperature
  std::int64_t validation_chips = 0;
};

RunCalibration calibrate_run(const PredictionTable& validation, const PredictionTable& test);

Json calibration_json(const RunCalibration& calibration);

}  // namespace tinct
