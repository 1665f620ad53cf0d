// Softmax and log-sum-exp subtract the row maximum first, so large logits and small
// temperatures do not overflow. The search works in u = log T, where the range is symmetric
// around T = 1 and equal steps mean equal ratios of temperature.
#include "assess/temperature_scaling.hpp"

#include <algorithm>
#include <cmath>
#include <string>

#include "util/error.hpp"

namespace tinct {
namespace {

constexpr int kScanPoints = 81;
constexpr double kTolerance = 1e-10;  // in log T
const double kGoldenRatio = (std::sqrt(5.0) - 1) / 2;

void check_input(const std::vector<std::vector<double>>& logits, const std::vector<int>& labels) {
  if (logits.empty()) fail_usage("temperature scaling: no validation logits to fit on");
  if (labels.size() != logits.size())
    fail_usage("temperature scaling: " + std::to_string(logits.size()) + " logit rows but " +
               std::to_string(labels.size()) + " labels");
  const std::size_t classes = logits[0].size();
  if (classes < 2) fail_usage("temperature scaling: needs at least 2 classes per logit row");
  for (std::size_t i = 0; i < logits.size(); ++i) {
    if (logits[i].size() != classes)
      fail_usage("temperature scaling: logit row " + std::to_string(i) + " has " +
                 std::to_string(logits[i].size()) + " entries, expected " +
                 std::to_string(classes));
    for (double z : logits[i])
      if (!std::isfinite(z))
        fail_runtime("temperature scaling: logit row " + std::to_string(i) + " is not finite");
    if (labels[i] < 0 || labels[i] >= static_cast<int>(classes))
      fail_usage("temperature scaling: label " + std::to_string(i) + " = " +
                 std::to_string(labels[i]) + " is not a class index 0.." +
                 std::to_string(classes - 1));
  }
}

void check_temperature(double temperature) {
  if (!(temperature > 0) || !std::isfinite(temperature))
    fail_usage("temperature scaling: temperature must be > 0, got " + std::to_string(temperature));
}

// -log softmax(z / T)[label] = logsumexp(z / T) - z[label] / T.
double row_nll(const std::vector<double>& z, int label, double temperature) {
  const double top = *std::max_element(z.begin(), z.end());
  double sum = 0;
  for (double v : z) sum += std::exp((v - top) / temperature);
  return std::log(sum) - (z[label] - top) / temperature;
}

template <typename In, typename Out>
void softmax_row(const In* z, int classes, double temperature, Out* out) {
  const double top = *std::max_element(z, z + classes);
  double sum = 0;
  for (int k = 0; k < classes; ++k) sum += std::exp((z[k] - top) / temperature);
  for (int k = 0; k < classes; ++k)
    out[k] = static_cast<Out>(std::exp((z[k] - top) / temperature) / sum);
}

// Golden-section search for the minimum of f on [low, high].
template <typename F>
double golden_section(F f, double low, double high) {
  double a = high - kGoldenRatio * (high - low), b = low + kGoldenRatio * (high - low);
  double fa = f(a), fb = f(b);
  while (high - low > kTolerance) {
    if (fa <= fb) {
      high = b;
      b = a;
      fb = fa;
      a = high - kGoldenRatio * (high - low);
      fa = f(a);
    } else {
      low = a;
      a = b;
      fa = fb;
      b = low + kGoldenRatio * (high - low);
      fb = f(b);
    }
  }
  return (low + high) / 2;
}

}  // namespace

double negative_log_likelihood(const std::vector<std::vector<double>>& logits,
                               const std::vector<int>& labels, double temperature) {
  check_input(logits, labels);
  check_temperature(temperature);
  double total = 0;
  for (std::size_t i = 0; i < logits.size(); ++i) total += row_nll(logits[i], labels[i], temperature);
  return total / static_cast<double>(logits.size());
}

TemperatureFit fit_temperature(const std::vector<std::vector<double>>& logits,
                               const std::vector<int>& labels) {
  check_input(logits, labels);
  auto nll = [&](double u) {
    double total = 0;
    for (std::size_t i = 0; i < logits.size(); ++i) total += row_nll(logits[i], labels[i], std::exp(u));
    return total / static_cast<double>(logits.size());
  };
  const double u_min = std::log(kMinTemperature), u_max = std::log(kMaxTemperature);
  const double step = (u_max - u_min) / (kScanPoints - 1);
  std::vector<double> scan(kScanPoints);
  for (int k = 0; k < kScanPoints; ++k) scan[k] = nll(u_min + k * step);
  const auto [lowest, highest] = std::minmax_element(scan.begin(), scan.end());
  TemperatureFit fit;
  fit.nll_before = fit.nll_after = nll(0);
  if (*highest - *lowest <= 1e-12 * (1 + std::fabs(*lowest))) return fit;  // flat: T = 1
  const int best = static_cast<int>(lowest - scan.begin());
  const double low = u_min + std::max(best - 1, 0) * step;
  const double high = u_min + std::min(best + 1, kScanPoints - 1) * step;
  const double u = std::clamp(golden_section(nll, low, high), u_min, u_max);
  fit.temperature = std::exp(u);
  fit.nll_after = nll(u);
  fit.at_bound = u - u_min < 1e-6 || u_max - u < 1e-6;
  return fit;
}

std::vector<std::vector<double>> apply_temperature(const std::vector<std::vector<double>>& logits,
                                                   double temperature) {
  check_temperature(temperature);
  std::vector<std::vector<double>> probabilities(logits.size());
  for (std::size_t i = 0; i < logits.size(); ++i) {
    if (logits[i].empty()) fail_usage("temperature scaling: logit row " + std::to_string(i) + " is empty");
    probabilities[i].resize(logits[i].size());
    softmax_row(logits[i].data(), static_cast<int>(logits[i].size()), temperature,
                probabilities[i].data());
  }
  return probabilities;
}

void apply_temperature(const float* logits, std::size_t count, int classes, double temperature,
                       float* probabilities) {
  check_temperature(temperature);
  if (classes < 1) fail_usage("temperature scaling: classes must be >= 1");
  for (std::size_t i = 0; i < count; ++i)
    softmax_row(logits + i * classes, classes, temperature, probabilities + i * classes);
}

}  // namespace tinct
