// Benchmark of the area of applicability (built only by scripts/bench.sh): fitting on N
// training vectors of F features (N^2 F multiply-adds) and the dissimilarity index of query
// vectors (N F multiply-adds each), on one and on all threads, against a plain row-by-row
// loop as the naive baseline. Prints a table; the map's figure is queries per second.
//
// usage: tinct_assess_bench [N F QUERIES]
#include <algorithm>
#include <chrono>
#include <cmath>
#include <cstdio>
#include <cstdlib>
#include <random>
#include <thread>
#include <vector>

#include "assess/area_of_applicability.hpp"

namespace {

double seconds_since(std::chrono::steady_clock::time_point start) {
  return std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
}

std::vector<float> random_vectors(std::size_t count, int features, std::uint64_t seed) {
  std::mt19937_64 generator(seed);
  std::normal_distribution<float> normal;
  std::vector<float> out(count * features);
  for (float& v : out) v = normal(generator);
  return out;
}

// The naive baseline: for each query, each training row, a plain loop over features.
double naive_seconds(const tinct::ApplicabilityModel& model, const std::vector<float>& queries,
                     std::size_t count, const std::vector<float>& training) {
  const int F = model.features;
  const auto start = std::chrono::steady_clock::now();
  volatile float sink = 0;
  for (std::size_t q = 0; q < count; ++q) {
    float best = INFINITY;
    for (std::size_t j = 0; j < model.count(); ++j) {
      float sum = 0;
      for (int f = 0; f < F; ++f) {
        const float d = static_cast<float>((queries[q * F + f] - training[j * F + f]) * model.scale[f]);
        sum += d * d;
      }
      best = std::min(best, sum);
    }
    sink = sink + best;
  }
  return seconds_since(start);
}

}  // namespace

int main(int argc, char** argv) {
  const std::size_t n = argc > 1 ? std::strtoul(argv[1], nullptr, 10) : 5000;
  const int features = argc > 2 ? std::atoi(argv[2]) : 256;
  const std::size_t queries = argc > 3 ? std::strtoul(argv[3], nullptr, 10) : 20000;
  const int cores = static_cast<int>(std::max(1u, std::thread::hardware_concurrency()));
  const std::vector<float> training = random_vectors(n, features, 1);
  std::vector<int> folds(n);
  for (std::size_t i = 0; i < n; ++i) folds[i] = static_cast<int>(i % 5);
  const std::vector<float> query = random_vectors(queries, features, 2);

  std::printf("area of applicability: N = %zu training vectors, F = %d features, %zu queries\n",
              n, features, queries);
  std::printf("%-34s %10s %14s\n", "step", "seconds", "G mult-add/s");
  tinct::ApplicabilityModel model;
  for (int threads : {1, cores}) {
    auto start = std::chrono::steady_clock::now();
    model = tinct::fit_applicability(training, features, folds, {}, threads);
    double s = seconds_since(start);
    std::printf("fit, %d thread(s)%*s %10.2f %14.2f\n", threads, 17 - (threads > 9), "", s,
                double(n) * n * features / s / 1e9);
    std::vector<float> index(queries);
    start = std::chrono::steady_clock::now();
    tinct::applicability_index(model, query.data(), queries, index.data(), threads);
    s = seconds_since(start);
    std::printf("index, %d thread(s)%*s %10.2f %14.2f  (%.0f queries/s)\n", threads,
                15 - (threads > 9), "", s, double(queries) * n * features / s / 1e9, queries / s);
  }
  const std::size_t naive_count = std::min<std::size_t>(queries, 1000);
  const double naive = naive_seconds(model, query, naive_count, training);
  std::printf("index, naive loop, 1 thread%*s %10.2f %14.2f  (%.0f queries/s, %zu queries)\n", 7,
              "", naive, double(naive_count) * n * features / naive / 1e9, naive_count / naive,
              naive_count);
  std::printf("model memory: %.1f MB (N x F floats)\n", double(n) * features * 4 / 1e6);
  return 0;
}
