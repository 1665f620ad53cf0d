// Per-band statistics of the valid pixels of a store's bands, in reflectance units,
// in bounded memory: a 65536-bin histogram per band for p02 and p98 with numpy's default
// (linear) percentile. Exact for uint16 storage (a bin per stored value, which also gives
// mean and std); for float32, Welford (RunningStats) for mean, std, min and max in a first
// pass, and the percentiles are exact to a bin width, (max - min) / 65536.
// A uint16 store's writer counts its histograms chip by chip as it writes (BandHistograms),
// so it never reads bands.bin back; band_statistics() gives the same figures from the files.
#pragma once

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <vector>

#include "chips/store_manifest.hpp"

namespace tinct {

// `bands` and `valid` hold `chip_count` chips laid out as in bands.bin and valid.bin.
// A band with no valid pixel gets count 0. Fails (runtime) on a non-finite value at
// a valid pixel.
std::vector<BandStatistics> band_statistics(const StoreLayout& layout, std::int64_t chip_count,
                                            const std::uint8_t* bands, const std::uint8_t* valid);

// The histograms of uint16 storage, a bin per stored value, counted chip by chip.
class BandHistograms {
 public:
  explicit BandHistograms(const StoreLayout& layout);
  // One chip: bands x size x size stored values and size x size validity, as in the files.
  void add_chip(const std::uint16_t* bands, const std::uint8_t* valid);
  std::vector<BandStatistics> statistics() const;

 private:
  StoreLayout layout_;
  std::size_t area_;
  std::vector<std::vector<std::int64_t>> counts_;  // per band, 65536 bins
};

// numpy.percentile(values, percent) with its default linear method, given the k-th
// smallest of `count` values by `value_of_rank(k)`.
template <typename ValueOfRank>
double linear_percentile(std::int64_t count, double percent, ValueOfRank value_of_rank) {
  const double position = static_cast<double>(count - 1) * (percent / 100.0);
  const double below = std::floor(position);
  const auto rank = static_cast<std::int64_t>(below);
  const double a = value_of_rank(rank);
  const double b = value_of_rank(std::min(rank + 1, count - 1));
  const double t = position - below;
  const double difference = b - a;
  // numpy's _lerp: from the upper end when t >= 0.5, for monotonicity.
  return t >= 0.5 ? b - difference * (1 - t) : a + difference * t;
}

}  // namespace tinct
