// The per-scene percentile stretch that turns three bands into a colour composite:
// a streaming histogram over a known value range gives the low and high percentiles,
// which map linearly to 0 and 1 (then an optional gamma). Leaves out per-chip
// stretches, histogram equalisation and nodata handling (the caller skips invalid pixels).
#pragma once

#include <cmath>
#include <cstddef>
#include <cstdint>
#include <vector>

namespace tinct {

// Bin i holds the values nearest to min + i * (max - min) / (bins - 1); values outside
// [min, max] land in the end bins, NaN is skipped. With integer data and
// bins == max - min + 1 (byte or uint16 DN) each bin is one value and percentile()
// equals numpy's default np.percentile bit for bit; otherwise it is np.percentile of
// the values rounded to their bin centres, so within half a bin step of the exact one.
class PercentileHistogram {
 public:
  // Fails (usage) unless min < max, both finite, and bins >= 2.
  PercentileHistogram(double min, double max, std::size_t bins);

  void add(double value) {
    if (std::isnan(value)) return;
    const double position = (value - min_) * scale_;
    const std::size_t last = counts_.size() - 1;
    std::size_t bin = 0;
    if (position >= static_cast<double>(last)) bin = last;
    else if (position > 0) bin = static_cast<std::size_t>(position + 0.5);
    ++counts_[bin];
    ++count_;
  }
  // Adds `count` values that add() would put in `bin` (for callers that bin themselves).
  void add_to_bin(std::size_t bin, std::int64_t count) {
    counts_[bin] += count;
    count_ += count;
  }
  std::int64_t count() const { return count_; }

  // percent in [0, 100]; fails (runtime) on an empty histogram.
  double percentile(double percent) const;

 private:
  double bin_value(std::size_t bin) const;
  double order_statistic(std::int64_t rank) const;  // rank 0 = smallest value

  double min_, max_;
  double scale_;  // bins per unit value: exactly 1 for one bin per integer
  std::vector<std::int64_t> counts_;
  std::int64_t count_ = 0;
};

struct StretchSettings {
  double low_percent = 2, high_percent = 98, gamma = 1.0;
};

// apply: low -> 0, high -> 1, clamped, then v^(1/gamma). NaN stays NaN. A degenerate
// range (high <= low, e.g. a constant band) maps every value to 0.5: mid-grey, not a
// division by zero.
struct BandStretch {
  double low, high, gamma;
  double apply(double v) const;
};

// Fails (usage) unless 0 <= low_percent < high_percent <= 100 and gamma > 0.
BandStretch make_stretch(const PercentileHistogram& histogram, const StretchSettings& settings);

}  // namespace tinct
