// Temperature scaling (Guo et al. 2017): one temperature T > 0 divides every logit so that the
// softmax probabilities of a trained classifier match how often it is right. Fitted on the
// validation chips by minimising the negative log-likelihood; it never changes which class is
// predicted, only how confident the probabilities are.
#pragma once

#include <cstddef>
#include <vector>

namespace tinct {

struct TemperatureFit {
  double temperature = 1;
  double nll_before = 0, nll_after = 0;  // mean negative log-likelihood at T = 1 and fitted T
  // True when the minimum lies at an end of the search range [kMinTemperature,
  // kMaxTemperature]: the NLL keeps falling beyond it (for example separable validation data
  // drive T towards 0); the temperature is then the range's end, worth a warning.
  bool at_bound = false;
};

constexpr double kMinTemperature = 0.01, kMaxTemperature = 100;

// logits is (N, K), K >= 2, labels (N) class indices. Minimises the mean NLL over u = log T:
// a scan of 81 points over the range, then golden-section search around the best to 1e-10 in
// u (the NLL is convex in 1/T, hence unimodal in log T). When the NLL does not depend on T
// (every row's logits equal) T is 1. Throws tinct::Error on malformed input.
TemperatureFit fit_temperature(const std::vector<std::vector<double>>& logits,
                               const std::vector<int>& labels);

// Mean over samples of -log softmax(z / T)[label].
double negative_log_likelihood(const std::vector<std::vector<double>>& logits,
                               const std::vector<int>& labels, double temperature);

// softmax(z / T) per row.
std::vector<std::vector<double>> apply_temperature(const std::vector<std::vector<double>>& logits,
                                                   double temperature);

// The same for maps: logits and probabilities are (count, classes) row-major float; the
// arithmetic is in double.
void apply_temperature(const float* logits, std::size_t count, int classes, double temperature,
                       float* probabilities);

}  // namespace tinct
