// Percentiles by walking the cumulative bin counts (O(bins) per query, a handful per
// scene), interpolated exactly as numpy does.
#include "colour/stretch.hpp"

#include <algorithm>
#include <string>

#include "util/error.hpp"

namespace tinct {

PercentileHistogram::PercentileHistogram(double min, double max, std::size_t bins)
    : min_(min), max_(max) {
  if (!(max > min) || !std::isfinite(min) || !std::isfinite(max) || bins < 2)
    fail_usage("percentile histogram: needs a finite range with max > min and at least 2 bins "
               "(got [" + std::to_string(min) + ", " + std::to_string(max) + "], " +
               std::to_string(bins) + " bins)");
  counts_.assign(bins, 0);
  scale_ = static_cast<double>(bins - 1) / (max - min);
}

double PercentileHistogram::bin_value(std::size_t bin) const {
  // Exact for one bin per integer: (max - min) * bin is an exact integer.
  return min_ + (max_ - min_) * static_cast<double>(bin) / static_cast<double>(counts_.size() - 1);
}

double PercentileHistogram::order_statistic(std::int64_t rank) const {
  std::int64_t seen = 0;
  for (std::size_t bin = 0; bin < counts_.size(); ++bin) {
    seen += counts_[bin];
    if (seen > rank) return bin_value(bin);
  }
  return max_;  // not reached for rank < count_
}

double PercentileHistogram::percentile(double percent) const {
  if (!(percent >= 0 && percent <= 100))
    fail_usage("percentile " + std::to_string(percent) + " is outside [0, 100]");
  if (count_ == 0)
    fail_runtime("percentile of an empty histogram: no valid values were added "
                 "(check the band's nodata and mask)");
  // numpy's default ("linear") method, operation for operation, so that integer data
  // give numpy's double bit for bit.
  const double index = static_cast<double>(count_ - 1) * (percent / 100.0);
  if (index >= static_cast<double>(count_ - 1)) return order_statistic(count_ - 1);
  const auto below = static_cast<std::int64_t>(std::floor(index));
  const double a = order_statistic(below);
  const double b = order_statistic(below + 1);
  const double t = index - static_cast<double>(below);
  const double d = b - a;
  return t >= 0.5 ? b - d * (1 - t) : a + d * t;
}

double BandStretch::apply(double v) const {
  if (std::isnan(v)) return v;
  if (!(high > low)) return 0.5;
  const double t = std::clamp((v - low) / (high - low), 0.0, 1.0);
  return gamma == 1.0 ? t : std::pow(t, 1.0 / gamma);
}

BandStretch make_stretch(const PercentileHistogram& histogram, const StretchSettings& settings) {
  if (!(settings.low_percent >= 0 && settings.low_percent < settings.high_percent &&
        settings.high_percent <= 100))
    fail_usage("stretch: needs 0 <= low_percent < high_percent <= 100 (got " +
               std::to_string(settings.low_percent) + " and " +
               std::to_string(settings.high_percent) + ")");
  if (!(settings.gamma > 0))
    fail_usage("stretch: gamma must be > 0 (got " + std::to_string(settings.gamma) + ")");
  return {histogram.percentile(settings.low_percent), histogram.percentile(settings.high_percent),
          settings.gamma};
}

}  // namespace tinct
