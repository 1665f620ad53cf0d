// Pairs are clusters of one, so both forms share one loop over clusters given as (sum, count).
// The resampled means are sorted once and read at the two percentile positions.
#include "assess/paired_bootstrap.hpp"

#include <algorithm>
#include <cmath>
#include <map>
#include <random>
#include <string>

#include "util/error.hpp"

namespace tinct {
namespace {

struct Cluster {
  double sum = 0;
  double count = 0;
};

// Uniform in [0, n) by rejection of the incomplete top range of the 64-bit stream.
std::uint64_t draw_below(std::mt19937_64& generator, std::uint64_t n) {
  const std::uint64_t limit = UINT64_MAX - UINT64_MAX % n;
  std::uint64_t value;
  do value = generator(); while (value >= limit);
  return value % n;
}

// numpy's default ("linear") percentile of sorted values at fraction q in [0, 1].
double percentile(const std::vector<double>& sorted, double q) {
  const double position = q * static_cast<double>(sorted.size() - 1);
  const std::size_t below = static_cast<std::size_t>(std::floor(position));
  const std::size_t above = std::min(below + 1, sorted.size() - 1);
  const double fraction = position - static_cast<double>(below);
  return sorted[below] + fraction * (sorted[above] - sorted[below]);
}

void check_input(const std::vector<double>& differences, const BootstrapOptions& options) {
  if (differences.empty()) fail_usage("paired bootstrap: no differences to resample");
  if (options.resamples < 1)
    fail_usage("paired bootstrap: resamples must be >= 1, got " +
               std::to_string(options.resamples));
  if (!(options.level > 0 && options.level < 1))
    fail_usage("paired bootstrap: level must be in (0, 1), got " + std::to_string(options.level));
  for (std::size_t i = 0; i < differences.size(); ++i)
    if (!std::isfinite(differences[i]))
      fail_runtime("paired bootstrap: difference " + std::to_string(i) + " is not finite");
}

BootstrapInterval resample(const std::vector<Cluster>& clusters, double mean,
                           const BootstrapOptions& options) {
  BootstrapInterval interval;
  interval.mean = interval.low = interval.high = mean;
  interval.level = options.level;
  interval.resamples = options.resamples;
  interval.units = static_cast<int>(clusters.size());
  if (clusters.size() < 2) return interval;
  interval.defined = true;
  std::mt19937_64 generator(options.seed);
  std::vector<double> means(options.resamples);
  for (double& resampled : means) {
    double sum = 0, count = 0;
    for (std::size_t k = 0; k < clusters.size(); ++k) {
      const Cluster& drawn = clusters[draw_below(generator, clusters.size())];
      sum += drawn.sum;
      count += drawn.count;
    }
    resampled = sum / count;
  }
  std::sort(means.begin(), means.end());
  interval.low = percentile(means, (1 - options.level) / 2);
  interval.high = percentile(means, (1 + options.level) / 2);
  return interval;
}

double mean_of(const std::vector<double>& values) {
  double sum = 0;
  for (double v : values) sum += v;
  return sum / static_cast<double>(values.size());
}

}  // namespace

BootstrapInterval paired_bootstrap(const std::vector<double>& differences,
                                   const BootstrapOptions& options) {
  check_input(differences, options);
  std::vector<Cluster> pairs;
  pairs.reserve(differences.size());
  for (double d : differences) pairs.push_back({d, 1});
  return resample(pairs, mean_of(differences), options);
}

BootstrapInterval paired_cluster_bootstrap(const std::vector<double>& differences,
                                           const std::vector<int>& clusters,
                                           const BootstrapOptions& options) {
  check_input(differences, options);
  if (clusters.size() != differences.size())
    fail_usage("paired bootstrap: " + std::to_string(clusters.size()) + " cluster ids for " +
               std::to_string(differences.size()) + " differences");
  std::map<int, Cluster> by_id;  // ordered: the draw order does not depend on input order
  for (std::size_t i = 0; i < differences.size(); ++i) {
    by_id[clusters[i]].sum += differences[i];
    by_id[clusters[i]].count += 1;
  }
  std::vector<Cluster> grouped;
  for (const auto& entry : by_id) grouped.push_back(entry.second);
  BootstrapInterval interval = resample(grouped, mean_of(differences), options);
  interval.clustered = true;
  return interval;
}

}  // namespace tinct
