// Streaming mean and variance (Welford 1962) with the pairwise merge of Chan et
// al. (1979), so statistics of billions of pixels stay exact in double and can be
// combined across windows, threads or shards.
#pragma once

#include <cstdint>
#include <limits>

namespace tinct {

class RunningStats {
 public:
  void add(double x) {
    ++count_;
    const double delta = x - mean_;
    mean_ += delta / static_cast<double>(count_);
    m2_ += delta * (x - mean_);
    if (x < min_) min_ = x;
    if (x > max_) max_ = x;
  }

  void merge(const RunningStats& other);
  // Statistics known only by their moments (e.g. read back from a manifest); min
  // and max stay unknown (infinite).
  static RunningStats from_moments(std::int64_t count, double mean, double m2) {
    RunningStats stats;
    stats.count_ = count;
    stats.mean_ = mean;
    stats.m2_ = m2;
    return stats;
  }

  std::int64_t count() const { return count_; }
  double mean() const { return mean_; }
  double m2() const { return m2_; }
  double population_variance() const { return count_ > 0 ? m2_ / count_ : 0.0; }
  double sample_variance() const { return count_ > 1 ? m2_ / (count_ - 1) : 0.0; }
  double population_std() const;
  double sample_std() const;
  double min() const { return min_; }
  double max() const { return max_; }

 private:
  std::int64_t count_ = 0;
  double mean_ = 0.0;
  double m2_ = 0.0;
  double min_ = std::numeric_limits<double>::infinity();
  double max_ = -std::numeric_limits<double>::infinity();
};

}  // namespace tinct
