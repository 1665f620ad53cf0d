#include "pairing/colour_composer.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <memory>
#include <optional>
#include <vector>

#include "colour/srgb_lab.hpp"
#include "util/error.hpp"

namespace tinct {
namespace {

constexpr int kStripRows = 128;
constexpr std::size_t kFloatBins = 65536;

struct ValueRange {
  double min, max;
  std::size_t bins;
};

std::optional<ValueRange> integer_range(const std::string& type) {
  if (type == "Byte") return ValueRange{0, 255, 256};
  if (type == "UInt16") return ValueRange{0, 65535, 65536};
  if (type == "Int16") return ValueRange{-32768, 32767, 65536};
  return std::nullopt;
}

template <typename Visit>
void for_each_strip(const ColourReader& read, const TargetGrid& grid, Visit visit) {
  std::vector<float> strip(3 * static_cast<std::size_t>(grid.width) * kStripRows);
  for (int row = 0; row < grid.height; row += kStripRows) {
    const int rows = std::min(kStripRows, grid.height - row);
    read(0, row, grid.width, rows, strip.data());
    visit(strip.data(), static_cast<std::size_t>(grid.width) * rows);
  }
}

bool all_finite(const float* rgb, std::size_t plane, std::size_t i) {
  return std::isfinite(rgb[i]) && std::isfinite(rgb[plane + i]) && std::isfinite(rgb[2 * plane + i]);
}

// Min and max of valid pixels per band, for sources without a fixed integer range.
std::array<ValueRange, 3> measured_ranges(const ColourReader& read, const TargetGrid& grid) {
  std::array<ValueRange, 3> ranges;
  for (auto& r : ranges) r = {std::numeric_limits<double>::max(), std::numeric_limits<double>::lowest(), kFloatBins};
  for_each_strip(read, grid, [&](const float* rgb, std::size_t n) {
    for (std::size_t i = 0; i < n; ++i) {
      if (!all_finite(rgb, n, i)) continue;
      for (int b = 0; b < 3; ++b) {
        ranges[b].min = std::min(ranges[b].min, double(rgb[b * n + i]));
        ranges[b].max = std::max(ranges[b].max, double(rgb[b * n + i]));
      }
    }
  });
  for (auto& r : ranges) {
    if (r.min > r.max) throw NoValidColour("the colour bands hold no valid pixel");
    if (r.max <= r.min) r.max = r.min + 1;
  }
  return ranges;
}

IntegerRange integer_values(const ValueRange& range) {
  return {range.min, static_cast<std::size_t>(range.max - range.min) + 1};
}

}  // namespace

// Linear light of every integer value of a band's type, through the band's stretch:
// then a pixel of integer colour costs a lookup instead of the stretch and the sRGB
// transfer function, with the same float as the formula (any other value takes it).
class ColourComposer::LinearTable {
 public:
  LinearTable() = default;
  LinearTable(const BandStretch& stretch, const IntegerRange& range)
      : stretch_(stretch), first_(static_cast<float>(range.first)), values_(range.count) {
    for (std::size_t i = 0; i < range.count; ++i) values_[i] = formula(first_ + static_cast<float>(i));
  }

  float operator()(float v) const {
    const float offset = v - first_;  // exact for the integers of the range
    if (offset >= 0.0f && offset < static_cast<float>(values_.size())) {
      const auto i = static_cast<std::size_t>(offset);
      if (static_cast<float>(i) == offset) return values_[i];
    }
    return formula(v);  // NaN, or a value between integers (a warped view)
  }

 private:
  float formula(float v) const { return srgb_to_linear_fast(static_cast<float>(stretch_.apply(v))); }

  BandStretch stretch_{};
  float first_ = 0;
  std::vector<float> values_;
};

ColourComposer::ColourComposer(std::array<BandStretch, 3> stretches, const std::array<IntegerRange, 3>& ranges)
    : stretches_(stretches),
      tables_(std::make_shared<const std::array<LinearTable, 3>>(std::array<LinearTable, 3>{
          LinearTable(stretches[0], ranges[0]), LinearTable(stretches[1], ranges[1]),
          LinearTable(stretches[2], ranges[2])})) {}

ColourComposer ColourComposer::for_byte_colour() {
  const BandStretch identity{0, 255, 1.0};
  return ColourComposer({identity, identity, identity});
}

std::optional<StretchFit> StretchFit::for_types(const std::array<std::string, 3>& data_types) {
  StretchFit fit;
  fit.ranges_.emplace();
  for (int b = 0; b < 3; ++b) {
    const auto range = integer_range(data_types[b]);
    if (!range) return std::nullopt;
    fit.histograms_.emplace_back(range->min, range->max, range->bins);
    (*fit.ranges_)[b] = integer_values(*range);
  }
  return fit;
}

void StretchFit::add(const float* red, const float* green, const float* blue, std::size_t n) {
  if (!ranges_) {
    for (std::size_t i = 0; i < n; ++i) {
      if (!std::isfinite(red[i]) || !std::isfinite(green[i]) || !std::isfinite(blue[i])) continue;
      histograms_[0].add(red[i]);
      histograms_[1].add(green[i]);
      histograms_[2].add(blue[i]);
    }
    return;
  }
  // A bin per integer: an integer value's bin is its offset from the first, counted
  // here in plain arrays; anything else goes through the histogram's own binning.
  const float* bands[3] = {red, green, blue};
  for (int b = 0; b < 3; ++b) {
    if (integer_counts_[b].empty()) integer_counts_[b].assign((*ranges_)[b].count, 0);
  }
  for (std::size_t i = 0; i < n; ++i) {
    if (!std::isfinite(red[i]) || !std::isfinite(green[i]) || !std::isfinite(blue[i])) continue;
    for (int b = 0; b < 3; ++b) {
      const double offset = static_cast<double>(bands[b][i]) - (*ranges_)[b].first;
      const auto bin = static_cast<std::size_t>(offset >= 0 ? offset : 0);
      if (offset >= 0 && static_cast<double>(bin) == offset && bin < integer_counts_[b].size()) {
        ++integer_counts_[b][bin];
      } else {
        histograms_[b].add(bands[b][i]);
      }
    }
  }
}

ColourComposer StretchFit::composer(const StretchSettings& settings) const {
  std::vector<PercentileHistogram> histograms = histograms_;
  for (int b = 0; b < 3; ++b) {
    for (std::size_t bin = 0; bin < integer_counts_[b].size(); ++bin) {
      if (integer_counts_[b][bin] > 0) histograms[b].add_to_bin(bin, integer_counts_[b][bin]);
    }
  }
  if (histograms[0].count() == 0) throw NoValidColour("the colour bands hold no valid pixel");
  const std::array<BandStretch, 3> stretches{make_stretch(histograms[0], settings),
                                             make_stretch(histograms[1], settings),
                                             make_stretch(histograms[2], settings)};
  return ranges_ ? ColourComposer(stretches, *ranges_) : ColourComposer(stretches);
}

ColourComposer ColourComposer::fit(const ColourReader& read, const TargetGrid& grid,
                                   const std::array<std::string, 3>& data_types,
                                   const StretchSettings& settings) {
  std::array<ValueRange, 3> ranges;
  bool all_integer = true;
  for (int b = 0; b < 3; ++b) {
    const auto range = integer_range(data_types[b]);
    all_integer = all_integer && range.has_value();
    if (range) ranges[b] = *range;
  }
  if (!all_integer) ranges = measured_ranges(read, grid);
  std::vector<PercentileHistogram> histograms;
  for (const auto& r : ranges) histograms.emplace_back(r.min, r.max, r.bins);
  StretchFit fit;
  fit.histograms_ = std::move(histograms);
  for_each_strip(read, grid, [&](const float* rgb, std::size_t n) { fit.add(rgb, rgb + n, rgb + 2 * n, n); });
  if (all_integer) {
    fit.ranges_.emplace();
    for (int b = 0; b < 3; ++b) (*fit.ranges_)[b] = integer_values(ranges[b]);
  }
  return fit.composer(settings);
}

void ColourComposer::stretched(const float* rgb, std::size_t n, float* out) const {
  for (int b = 0; b < 3; ++b) {
    for (std::size_t i = 0; i < n; ++i) out[b * n + i] = static_cast<float>(stretches_[b].apply(rgb[b * n + i]));
  }
}

void ColourComposer::compose(const float* rgb, std::size_t n, std::uint8_t* lab, std::uint8_t* valid) const {
  std::vector<float> srgb(3 * n);
  if (tables_) {
    for (int b = 0; b < 3; ++b) {
      const LinearTable& table = (*tables_)[b];
      for (std::size_t i = 0; i < n; ++i) srgb[b * n + i] = table(rgb[b * n + i]);
    }
    linear_to_lab_codes(srgb.data(), srgb.data() + n, srgb.data() + 2 * n, n, lab, lab + n, lab + 2 * n);
  } else {
    stretched(rgb, n, srgb.data());
    srgb_to_lab_codes(srgb.data(), srgb.data() + n, srgb.data() + 2 * n, n, lab, lab + n, lab + 2 * n);
  }
  for (std::size_t i = 0; i < n; ++i) {
    if (!all_finite(rgb, n, i)) valid[i] = 0;
  }
}

void ColourComposer::lightness(const float* rgb, std::size_t n, float* out) const {
  std::vector<float> srgb(3 * n);
  stretched(rgb, n, srgb.data());
  for (std::size_t i = 0; i < n; ++i) {
    out[i] = all_finite(rgb, n, i)
                 ? static_cast<float>(srgb_to_lab(srgb[i], srgb[n + i], srgb[2 * n + i]).L)
                 : std::numeric_limits<float>::quiet_NaN();
  }
}

}  // namespace tinct
