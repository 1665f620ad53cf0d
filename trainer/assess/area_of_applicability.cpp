// One pass over all training pairs gives both d_bar (sum of distances) and each vector's
// nearest distance outside its fold. Work is cut into chunks of kChunk rows, each chunk's
// squared distances to every training vector held at once (kChunk x N floats), and chunks are
// shared between threads; per-row results are summed in row order, so the result does not
// depend on the thread count.
#include "assess/area_of_applicability.hpp"

#include <algorithm>
#include <atomic>
#include <cmath>
#include <limits>
#include <set>
#include <string>
#include <thread>

#include "util/error.hpp"

namespace tinct {
namespace {

constexpr std::size_t kChunk = 64;

[[noreturn]] void fail_input(const std::string& message) {
  fail_usage("area of applicability: " + message);
}

void check_input(const std::vector<float>& features, int feature_count,
                 const std::vector<int>& folds, const std::vector<double>& weights) {
  if (feature_count < 1) fail_input("feature count must be >= 1");
  const std::size_t n = folds.size();
  if (features.size() != n * feature_count)
    fail_input(std::to_string(features.size()) + " feature values for " + std::to_string(n) +
               " training vectors of " + std::to_string(feature_count) + " features");
  if (std::set<int>(folds.begin(), folds.end()).size() < 2)
    fail_input("needs training vectors of at least two cross-validation folds");
  for (std::size_t i = 0; i < features.size(); ++i)
    if (!std::isfinite(features[i]))
      fail_runtime("area of applicability: training vector " + std::to_string(i / feature_count) +
                   ", feature " + std::to_string(i % feature_count) + " is not finite");
  if (!weights.empty() && weights.size() != static_cast<std::size_t>(feature_count))
    fail_input(std::to_string(weights.size()) + " weights for " + std::to_string(feature_count) +
               " features");
  for (std::size_t f = 0; f < weights.size(); ++f)
    if (!(weights[f] >= 0) || !std::isfinite(weights[f]))
      fail_input("weight " + std::to_string(f) + " is " + std::to_string(weights[f]) +
                 ": weights must be finite and >= 0");
}

// Training mean and sample sd per feature (two passes in double); scale = weight / sd.
void fit_scaling(ApplicabilityModel& model, const std::vector<float>& features,
                 const std::vector<double>& weights) {
  const std::size_t n = model.count();
  const int F = model.features;
  model.mean.assign(F, 0.0);
  model.scale.assign(F, 0.0);
  for (std::size_t i = 0; i < n; ++i)
    for (int f = 0; f < F; ++f) model.mean[f] += features[i * F + f];
  for (double& m : model.mean) m /= static_cast<double>(n);
  std::vector<double> squares(F, 0.0);
  for (std::size_t i = 0; i < n; ++i)
    for (int f = 0; f < F; ++f) {
      const double d = features[i * F + f] - model.mean[f];
      squares[f] += d * d;
    }
  for (int f = 0; f < F; ++f) {
    const double sd = std::sqrt(squares[f] / static_cast<double>(n - 1));
    const double weight = weights.empty() ? 1.0 : weights[f];
    if (sd > 0) model.scale[f] = weight / sd;
    else ++model.constant_features;
  }
}

void standardise(const ApplicabilityModel& model, const float* rows, std::size_t count,
                 float* out) {
  const int F = model.features;
  for (std::size_t i = 0; i < count; ++i)
    for (int f = 0; f < F; ++f)
      out[i * F + f] = static_cast<float>((rows[i * F + f] - model.mean[f]) * model.scale[f]);
}

// Calls work(begin, end) for chunks of kChunk rows of [0, count) on `threads` threads.
template <typename Work>
void for_chunks(std::size_t count, int threads, Work work) {
  const std::size_t chunks = (count + kChunk - 1) / kChunk;
  if (threads <= 0) threads = static_cast<int>(std::max(1u, std::thread::hardware_concurrency()));
  threads = static_cast<int>(std::min<std::size_t>(threads, std::max<std::size_t>(chunks, 1)));
  std::atomic<std::size_t> next{0};
  auto worker = [&] {
    for (std::size_t c; (c = next++) < chunks;)
      work(c * kChunk, std::min(count, (c + 1) * kChunk));
  };
  std::vector<std::thread> pool;
  for (int t = 1; t < threads; ++t) pool.emplace_back(worker);
  worker();
  for (std::thread& thread : pool) thread.join();
}

// Per training vector: the sum of distances to all others, and the squared distance to the
// nearest one of another fold.
void training_distances(const ApplicabilityModel& model, const std::vector<float>& standardised,
                        int threads, std::vector<double>& row_sums,
                        std::vector<float>& nearest_other_fold) {
  const std::size_t n = model.count();
  row_sums.assign(n, 0.0);
  nearest_other_fold.assign(n, std::numeric_limits<float>::infinity());
  for_chunks(n, threads, [&](std::size_t begin, std::size_t end) {
    std::vector<float> squared((end - begin) * n);
    model.training.squared_distances(standardised.data() + begin * model.features, end - begin,
                                     squared.data());
    for (std::size_t i = begin; i < end; ++i) {
      const float* row = squared.data() + (i - begin) * n;
      double sum = 0;
      float nearest = std::numeric_limits<float>::infinity();
      for (std::size_t j = 0; j < n; ++j) {
        if (j != i) sum += std::sqrt(static_cast<double>(row[j]));
        if (model.folds[j] != model.folds[i]) nearest = std::min(nearest, row[j]);
      }
      row_sums[i] = sum;
      nearest_other_fold[i] = nearest;
    }
  });
}

// Linear interpolation between order statistics (numpy's default percentile).
double percentile(const std::vector<double>& sorted, double q) {
  const double position = q * static_cast<double>(sorted.size() - 1);
  const std::size_t below = static_cast<std::size_t>(std::floor(position));
  const std::size_t above = std::min(below + 1, sorted.size() - 1);
  return sorted[below] + (position - static_cast<double>(below)) * (sorted[above] - sorted[below]);
}

void fit_threshold(ApplicabilityModel& model) {
  std::vector<double> sorted = model.training_index;
  std::sort(sorted.begin(), sorted.end());
  model.q1 = percentile(sorted, 0.25);
  model.q3 = percentile(sorted, 0.75);
  model.whisker = model.q3 + 1.5 * (model.q3 - model.q1);
  // The largest value not above the whisker; q3 <= whisker, so there is one.
  model.threshold = *(std::upper_bound(sorted.begin(), sorted.end(), model.whisker) - 1);
}

}  // namespace

ApplicabilityModel fit_applicability(const std::vector<float>& features, int feature_count,
                                     const std::vector<int>& folds,
                                     const std::vector<double>& weights, int threads) {
  check_input(features, feature_count, folds, weights);
  ApplicabilityModel model;
  model.features = feature_count;
  model.folds = folds;
  fit_scaling(model, features, weights);
  if (std::all_of(model.scale.begin(), model.scale.end(), [](double s) { return s == 0; }))
    fail_runtime("area of applicability: every feature is constant over the training vectors "
                 "(or weighted 0): there is no space to measure distances in");
  const std::size_t n = model.count();
  std::vector<float> standardised(features.size());
  standardise(model, features.data(), n, standardised.data());
  model.training = DistanceTiles(standardised.data(), n, feature_count);

  std::vector<double> row_sums;
  std::vector<float> nearest;
  training_distances(model, standardised, threads, row_sums, nearest);
  double total = 0;
  for (double s : row_sums) total += s;
  model.mean_distance = total / (static_cast<double>(n) * static_cast<double>(n - 1));
  if (!(model.mean_distance > 0))
    fail_runtime("area of applicability: all training vectors are identical in the "
                 "standardised feature space; d_bar is 0");
  model.training_index.resize(n);
  for (std::size_t i = 0; i < n; ++i)
    model.training_index[i] = std::sqrt(static_cast<double>(nearest[i])) / model.mean_distance;
  fit_threshold(model);
  return model;
}

void applicability_index(const ApplicabilityModel& model, const float* queries, std::size_t count,
                         float* index, int threads) {
  const std::size_t n = model.count();
  if (n == 0) fail_usage("area of applicability: the model holds no training vectors");
  for_chunks(count, threads, [&](std::size_t begin, std::size_t end) {
    std::vector<float> standardised((end - begin) * model.features);
    std::vector<float> squared((end - begin) * n);
    standardise(model, queries + begin * model.features, end - begin, standardised.data());
    model.training.squared_distances(standardised.data(), end - begin, squared.data());
    for (std::size_t i = begin; i < end; ++i) {
      const float* row = squared.data() + (i - begin) * n;
      const float nearest = *std::min_element(row, row + n);
      index[i] = static_cast<float>(std::sqrt(static_cast<double>(nearest)) / model.mean_distance);
    }
  });
}

std::vector<float> applicability_index(const ApplicabilityModel& model,
                                       const std::vector<float>& queries, int threads) {
  if (model.features < 1 || queries.size() % model.features != 0)
    fail_usage("area of applicability: " + std::to_string(queries.size()) +
               " query values are not whole vectors of " + std::to_string(model.features) +
               " features");
  std::vector<float> index(queries.size() / model.features);
  applicability_index(model, queries.data(), index.size(), index.data(), threads);
  return index;
}

}  // namespace tinct
