// Percentile bootstrap interval of the mean paired difference (for example pretrained minus
// scratch macro F1 over seeds x folds), seeded so the same input and seed give the same
// interval on every platform. Runs that share a fold partition are not independent: pass
// cluster ids to resample whole clusters (all runs of one fold together) instead of pairs.
#pragma once

#include <cstdint>
#include <vector>

namespace tinct {

struct BootstrapOptions {
  int resamples = 10000;
  double level = 0.95;
  std::uint64_t seed = 0;
};

struct BootstrapInterval {
  double mean = 0;            // of the differences as given
  double low = 0, high = 0;   // percentile interval at level
  double level = 0.95;
  int resamples = 0;
  int units = 0;              // what was resampled: pairs, or clusters
  bool clustered = false;
  // False with fewer than 2 units: nothing varies, the interval is [mean, mean].
  bool defined = false;
};

// Each resample draws `units` pairs with replacement (std::mt19937_64 seeded with seed and an
// unbiased draw of our own, so the stream does not depend on the standard library); its
// statistic is the mean difference. The interval's ends are the (1-level)/2 and (1+level)/2
// quantiles of the resampled means, linear interpolation between order statistics (numpy's
// default percentile). Cost O(resamples x N). Throws tinct::Error on empty or non-finite input.
BootstrapInterval paired_bootstrap(const std::vector<double>& differences,
                                   const BootstrapOptions& options = {});

// The same, resampling whole clusters: clusters[i] names the cluster of differences[i] (for
// example the fold); a resample draws as many clusters as there are, with replacement, and its
// statistic is the mean over all pairs drawn (sum of their differences / their count).
BootstrapInterval paired_cluster_bootstrap(const std::vector<double>& differences,
                                           const std::vector<int>& clusters,
                                           const BootstrapOptions& options = {});

}  // namespace tinct
