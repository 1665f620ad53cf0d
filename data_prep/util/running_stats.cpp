#include "util/running_stats.hpp"

#include <cmath>

namespace tinct {

void RunningStats::merge(const RunningStats& other) {
  if (other.count_ == 0) return;
  if (count_ == 0) {
    *this = other;
    return;
  }
  const double total = static_cast<double>(count_ + other.count_);
  const double delta = other.mean_ - mean_;
  mean_ += delta * static_cast<double>(other.count_) / total;
  m2_ += other.m2_ + delta * delta * static_cast<double>(count_) * static_cast<double>(other.count_) / total;
  count_ += other.count_;
  if (other.min_ < min_) min_ = other.min_;
  if (other.max_ > max_) max_ = other.max_;
}

double RunningStats::population_std() const { return std::sqrt(population_variance()); }
double RunningStats::sample_std() const { return std::sqrt(sample_variance()); }

}  // namespace tinct
