// trainer/assess/temperature_scaling: the fit undoes a known over-confidence, lowers ECE and
// NLL, never changes the predicted class, and reports a search that ran into its bounds. The
// comparison with SciPy's minimize_scalar is tests/reference/test_temperature_reference.cpp.
#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <random>
#include <vector>

#include "assess/classification_metrics.hpp"
#include "assess/temperature_scaling.hpp"
#include "util/error.hpp"

namespace {

struct Sample {
  std::vector<std::vector<double>> logits;
  std::vector<int> labels;
};

double uniform(std::mt19937_64& generator) {
  return static_cast<double>(generator() >> 11) * 0x1.0p-53;
}

// Labels drawn from softmax(z) with z ~ N(0, 1.5^2) per class, so z is calibrated by
// construction; the logits handed over are z x overconfidence.
Sample overconfident_sample(int n, int classes, double overconfidence, std::uint64_t seed) {
  std::mt19937_64 generator(seed);
  Sample sample;
  for (int i = 0; i < n; ++i) {
    std::vector<double> z(classes);
    for (double& v : z) {
      const double u1 = 1 - uniform(generator), u2 = uniform(generator);
      v = 1.5 * std::sqrt(-2 * std::log(u1)) * std::cos(2 * M_PI * u2);  // Box-Muller
    }
    const std::vector<double> p = tinct::apply_temperature({z}, 1.0)[0];
    double u = uniform(generator), cumulative = 0;
    int label = classes - 1;
    for (int k = 0; k < classes; ++k) {
      cumulative += p[k];
      if (u < cumulative) { label = k; break; }
    }
    for (double& v : z) v *= overconfidence;
    sample.logits.push_back(z);
    sample.labels.push_back(label);
  }
  return sample;
}

int argmax(const std::vector<double>& row) {
  return static_cast<int>(std::max_element(row.begin(), row.end()) - row.begin());
}

}  // namespace

TEST_CASE("Temperature scaling: an over-confident classifier is cooled and its ECE drops") {
  const Sample sample = overconfident_sample(4000, 3, 3.0, 11);
  const tinct::TemperatureFit fit = tinct::fit_temperature(sample.logits, sample.labels);
  INFO("T = " << fit.temperature << ", NLL " << fit.nll_before << " -> " << fit.nll_after);
  CHECK_FALSE(fit.at_bound);
  CHECK(fit.temperature > 2.6);  // the logits were scaled by 3; sampling noise allows ~10 %
  CHECK(fit.temperature < 3.4);
  CHECK(fit.nll_after < fit.nll_before);
  CHECK(fit.nll_after == Approx(tinct::negative_log_likelihood(sample.logits, sample.labels,
                                                               fit.temperature)));
  // The fitted T is a minimum: nudging it either way does not lower the NLL.
  CHECK(tinct::negative_log_likelihood(sample.logits, sample.labels, fit.temperature * 1.01) >=
        fit.nll_after);
  CHECK(tinct::negative_log_likelihood(sample.logits, sample.labels, fit.temperature / 1.01) >=
        fit.nll_after);

  const auto before = tinct::apply_temperature(sample.logits, 1.0);
  const auto after = tinct::apply_temperature(sample.logits, fit.temperature);
  const double ece_before = tinct::expected_calibration_error(sample.labels, before);
  const double ece_after = tinct::expected_calibration_error(sample.labels, after);
  INFO("ECE " << ece_before << " -> " << ece_after);
  CHECK(ece_before > 0.1);
  CHECK(ece_after < ece_before / 3);
  for (std::size_t i = 0; i < sample.logits.size(); ++i)
    REQUIRE(argmax(before[i]) == argmax(after[i]));
}

TEST_CASE("Temperature scaling: an under-confident classifier is warmed") {
  const Sample sample = overconfident_sample(4000, 4, 0.5, 12);
  const tinct::TemperatureFit fit = tinct::fit_temperature(sample.logits, sample.labels);
  CHECK(fit.temperature > 0.4);
  CHECK(fit.temperature < 0.6);
}

TEST_CASE("Temperature scaling: separable data run into the lower bound, flat logits keep T = 1") {
  // Every label has the largest logit: the NLL keeps falling as T goes to 0.
  const std::vector<std::vector<double>> separable = {{2, 0, 0}, {0, 3, 1}, {0, 0, 1}};
  const tinct::TemperatureFit low = tinct::fit_temperature(separable, {0, 1, 2});
  CHECK(low.at_bound);
  CHECK(low.temperature == Approx(tinct::kMinTemperature));
  // Equal logits in every row: the NLL is log K whatever T.
  const tinct::TemperatureFit flat = tinct::fit_temperature({{1, 1}, {0, 0}}, {0, 1});
  CHECK(flat.temperature == 1);
  CHECK(flat.nll_after == Approx(std::log(2.0)));
  CHECK_FALSE(flat.at_bound);
}

TEST_CASE("Temperature scaling: the float form equals the double form, bad input is refused") {
  const std::vector<std::vector<double>> logits = {{1.5, -0.5, 0.25}, {-2, 4, 0}};
  const std::vector<float> flat = {1.5f, -0.5f, 0.25f, -2.f, 4.f, 0.f};
  std::vector<float> probabilities(6);
  tinct::apply_temperature(flat.data(), 2, 3, 1.7, probabilities.data());
  const auto expected = tinct::apply_temperature(logits, 1.7);
  for (int i = 0; i < 2; ++i)
    for (int k = 0; k < 3; ++k) CHECK(probabilities[i * 3 + k] == Approx(expected[i][k]).epsilon(1e-6));
  CHECK_THROWS_AS(tinct::fit_temperature({}, {}), tinct::Error);
  CHECK_THROWS_AS(tinct::fit_temperature(logits, {0, 3}), tinct::Error);
  CHECK_THROWS_AS(tinct::fit_temperature({{1, 2}, {1}}, {0, 0}), tinct::Error);
  CHECK_THROWS_AS(tinct::apply_temperature(logits, 0.0), tinct::Error);
}
