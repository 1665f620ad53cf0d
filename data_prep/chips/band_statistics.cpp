#include "chips/band_statistics.hpp"

#include <array>
#include <string>

#include "chips/mapped_file.hpp"
#include "util/error.hpp"
#include "util/running_stats.hpp"

namespace tinct {
namespace {

constexpr std::size_t kBins = 65536;
using Histogram = std::vector<std::int64_t>;

// Welford's update waits on the previous one (a division each); eight
// independent accumulators per band, merged at the end, let them overlap.
constexpr std::size_t kLanes = 8;

struct BandPass {
  std::array<RunningStats, kLanes> lanes;
  RunningStats stats;  // the merged lanes
  Histogram histogram = Histogram(kBins, 0);

  void add(double value, std::int64_t pixel) { lanes[pixel % kLanes].add(value); }
  void merge_lanes() {
    stats = RunningStats();
    for (const RunningStats& lane : lanes) stats.merge(lane);
  }
};

// The bin holding the rank-th smallest value (0-based).
std::size_t bin_of_rank(const Histogram& histogram, std::int64_t rank) {
  std::int64_t seen = 0;
  for (std::size_t bin = 0; bin < histogram.size(); ++bin) {
    seen += histogram[bin];
    if (seen > rank) return bin;
  }
  return histogram.size() - 1;
}

constexpr std::int64_t kReleaseEvery = 64;  // chips between hand-backs of mapped pages

// Calls visit(chip, its stored values, its validity) for every chip, handing the visited
// pages back so the pass stays small whatever the store's size.
template <typename Stored, typename VisitChip>
void for_each_chip(const StoreLayout& layout, std::int64_t chip_count, const std::uint8_t* bands,
                   const std::uint8_t* valid, VisitChip visit) {
  const std::int64_t area = chip_valid_bytes(layout);
  const auto band_count = static_cast<std::int64_t>(layout.bands.size());
  const auto* values = reinterpret_cast<const Stored*>(bands);
  const std::int64_t chip_bytes = band_count * area * static_cast<std::int64_t>(sizeof(Stored));
  std::int64_t released = 0;  // chips whose pages were handed back
  for (std::int64_t chip = 0; chip < chip_count; ++chip) {
    visit(chip, values + chip * band_count * area, valid + chip * area);
    if ((chip + 1) % kReleaseEvery == 0 || chip + 1 == chip_count) {
      const std::int64_t done = chip + 1 - released;
      release_pages(bands + released * chip_bytes, static_cast<std::size_t>(done * chip_bytes));
      release_pages(valid + released * area, static_cast<std::size_t>(done * area));
      released = chip + 1;
    }
  }
}

// Calls visit(band, chip, pixel, stored value) for every valid pixel, chip by chip.
template <typename Stored, typename Visit>
void for_each_valid(const StoreLayout& layout, std::int64_t chip_count, const std::uint8_t* bands,
                    const std::uint8_t* valid, Visit visit) {
  const std::int64_t area = chip_valid_bytes(layout);
  const auto band_count = static_cast<std::int64_t>(layout.bands.size());
  const auto visit_chip = [&](std::int64_t chip, const Stored* values, const std::uint8_t* mask) {
    for (std::int64_t band = 0; band < band_count; ++band) {
      const Stored* plane = values + band * area;
      for (std::int64_t p = 0; p < area; ++p) {
        if (mask[p] != 0) visit(band, chip, p, plane[p]);
      }
    }
  };
  for_each_chip<Stored>(layout, chip_count, bands, valid, visit_chip);
}

double reflectance(const StoreBand& band, double stored) { return (stored + band.offset) * band.scale; }

// Count, mean and squared deviations of the reflectances a uint16 histogram counts: the
// stored values sum exactly in integers, the deviations in two passes over the bins.
RunningStats moments_of_histogram(const Histogram& histogram, const StoreBand& band) {
  std::int64_t count = 0, stored_sum = 0;
  for (std::size_t bin = 0; bin < histogram.size(); ++bin) {
    count += histogram[bin];
    stored_sum += histogram[bin] * static_cast<std::int64_t>(bin);
  }
  if (count == 0) return RunningStats();
  const double mean = reflectance(band, static_cast<double>(stored_sum) / static_cast<double>(count));
  double m2 = 0;
  for (std::size_t bin = 0; bin < histogram.size(); ++bin) {
    if (histogram[bin] == 0) continue;
    const double deviation = reflectance(band, static_cast<double>(bin)) - mean;
    m2 += static_cast<double>(histogram[bin]) * deviation * deviation;
  }
  return RunningStats::from_moments(count, mean, m2);
}

template <typename ValueOfBin>
BandStatistics summarise(const BandPass& pass, ValueOfBin value_of_bin) {
  BandStatistics result;
  result.count = pass.stats.count();
  if (result.count == 0) return result;
  result.mean = pass.stats.mean();
  result.std = pass.stats.population_std();
  const auto value_of_rank = [&](std::int64_t rank) {
    return value_of_bin(bin_of_rank(pass.histogram, rank), rank);
  };
  result.p02 = linear_percentile(result.count, 2, value_of_rank);
  result.p98 = linear_percentile(result.count, 98, value_of_rank);
  return result;
}

std::vector<BandStatistics> uint16_statistics(const StoreLayout& layout, std::int64_t chip_count,
                                              const std::uint8_t* bands, const std::uint8_t* valid) {
  BandHistograms histograms(layout);
  for_each_chip<std::uint16_t>(layout, chip_count, bands, valid,
                               [&](std::int64_t, const std::uint16_t* values, const std::uint8_t* mask) {
                                 histograms.add_chip(values, mask);
                               });
  return histograms.statistics();
}

std::vector<BandStatistics> float32_statistics(const StoreLayout& layout, std::int64_t chip_count,
                                               const std::uint8_t* bands, const std::uint8_t* valid) {
  std::vector<BandPass> passes(layout.bands.size());
  const auto first_visit = [&](std::int64_t band, std::int64_t chip, std::int64_t pixel, float stored) {
    const double value = reflectance(layout.bands[band], stored);
    if (!std::isfinite(value)) {
      fail_runtime("chip " + std::to_string(chip) + ", band " + layout.bands[band].name +
                   ": a valid pixel holds a non-finite value; mark such pixels invalid");
    }
    passes[band].add(value, pixel);
  };
  for_each_valid<float>(layout, chip_count, bands, valid, first_visit);
  // Second pass: bins spread over each band's min..max, so accuracy is a bin width.
  std::vector<double> bins_per_unit(passes.size(), 0.0);
  for (std::size_t band = 0; band < passes.size(); ++band) {
    passes[band].merge_lanes();
    const double range = passes[band].stats.max() - passes[band].stats.min();
    if (range > 0) bins_per_unit[band] = static_cast<double>(kBins) / range;
  }
  const auto second_visit = [&](std::int64_t band, std::int64_t, std::int64_t, float stored) {
    BandPass& pass = passes[band];
    const double bin = (reflectance(layout.bands[band], stored) - pass.stats.min()) * bins_per_unit[band];
    ++pass.histogram[std::min(kBins - 1, static_cast<std::size_t>(bin))];
  };
  for_each_valid<float>(layout, chip_count, bands, valid, second_visit);
  std::vector<BandStatistics> result;
  for (const BandPass& pass : passes) {
    const double low = pass.stats.min(), high = pass.stats.max();
    const double width = (high - low) / static_cast<double>(kBins);
    const auto value_of_bin = [&](std::size_t bin, std::int64_t rank) {
      if (rank == 0) return low;  // the extremes are known exactly
      if (rank == pass.stats.count() - 1) return high;
      return std::clamp(low + (static_cast<double>(bin) + 0.5) * width, low, high);
    };
    result.push_back(summarise(pass, value_of_bin));
  }
  return result;
}

}  // namespace

BandHistograms::BandHistograms(const StoreLayout& layout)
    : layout_(layout),
      area_(static_cast<std::size_t>(chip_valid_bytes(layout))),
      counts_(layout.bands.size(), std::vector<std::int64_t>(kBins, 0)) {}

void BandHistograms::add_chip(const std::uint16_t* bands, const std::uint8_t* valid) {
  // A bin per stored value: the histogram alone holds every moment, so the pass over the
  // pixels only counts (the store's statistics were an eighth of pair's time with Welford).
  for (std::size_t band = 0; band < counts_.size(); ++band) {
    std::int64_t* counts = counts_[band].data();
    const std::uint16_t* plane = bands + band * area_;
    for (std::size_t p = 0; p < area_; ++p) {
      if (valid[p] != 0) ++counts[plane[p]];
    }
  }
}

std::vector<BandStatistics> BandHistograms::statistics() const {
  std::vector<BandStatistics> result;
  for (std::size_t band = 0; band < counts_.size(); ++band) {
    BandPass pass;
    pass.histogram = counts_[band];
    pass.stats = moments_of_histogram(pass.histogram, layout_.bands[band]);
    const auto value_of_bin = [&](std::size_t bin, std::int64_t) {
      return reflectance(layout_.bands[band], static_cast<double>(bin));
    };
    result.push_back(summarise(pass, value_of_bin));
  }
  return result;
}

std::vector<BandStatistics> band_statistics(const StoreLayout& layout, std::int64_t chip_count,
                                            const std::uint8_t* bands, const std::uint8_t* valid) {
  return layout.storage == StorageType::uint16 ? uint16_statistics(layout, chip_count, bands, valid)
                                               : float32_statistics(layout, chip_count, bands, valid);
}

}  // namespace tinct
