// Turns three aligned bands (red, green, blue stored values) into 8-bit CIE Lab
// codes for one scene. The stretch is fitted once per scene from every valid pixel
// (a streaming percentile histogram, one strip at a time); with stretch: none (the
// default for Byte colour rasters) the values are taken as display-ready sRGB (0..255).
#pragma once

#include <array>
#include <cstdint>
#include <functional>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "colour/stretch.hpp"
#include "raster/target_grid.hpp"
#include "util/error.hpp"

namespace tinct {

// Reads red, green, blue (stored values, NaN invalid) over a window: 3 planes of w*h.
using ColourReader = std::function<void(int col, int row, int width, int height, float* out)>;

// A scene whose colour bands hold no valid pixel (all nodata, masked or clouded):
// tinct pair skips such a scene while others remain.
class NoValidColour : public Error {
 public:
  explicit NoValidColour(const std::string& message) : Error(ErrorKind::runtime, message) {}
};

class ColourComposer;

// The first value and the count of every integer a colour band's type can hold.
struct IntegerRange {
  double first;
  std::size_t count;
};

// The per-band percentile histograms of the stretch, fed strip by strip by whoever
// reads the pixels (pair's single pass). Integer colour types only: their value range
// is known before the first pixel.
class StretchFit {
 public:
  // nullopt unless all three types are Byte, UInt16 or Int16.
  static std::optional<StretchFit> for_types(const std::array<std::string, 3>& data_types);
  // Pixels where all three are finite count; red, green, blue hold n values each.
  void add(const float* red, const float* green, const float* blue, std::size_t n);
  ColourComposer composer(const StretchSettings& settings) const;

 private:
  friend class ColourComposer;
  std::vector<PercentileHistogram> histograms_;
  std::optional<std::array<IntegerRange, 3>> ranges_;  // integer colour types
  // Integer colour: counts per value (bin), kept apart from histograms_ (which take the
  // values between integers) and merged into them by composer().
  std::array<std::vector<std::int64_t>, 3> integer_counts_;
};

class ColourComposer {
 public:
  // A fixed 0..255 mapping for display-ready 8-bit colour.
  static ColourComposer for_byte_colour();
  // Fits the per-band percentile stretch over the whole grid, strip by strip.
  static ColourComposer fit(const ColourReader& read, const TargetGrid& grid,
                            const std::array<std::string, 3>& data_types, const StretchSettings& settings);

  // rgb: 3 planes of n stored values. Writes 3 planes of Lab codes and clears
  // valid[i] where any colour band is invalid.
  void compose(const float* rgb, std::size_t n, std::uint8_t* lab, std::uint8_t* valid) const;
  // CIE L* (0..100) of each pixel, NaN where invalid: the co-registration check's image.
  void lightness(const float* rgb, std::size_t n, float* out) const;

  const std::array<BandStretch, 3>& stretches() const { return stretches_; }

 private:
  friend class StretchFit;
  class LinearTable;
  explicit ColourComposer(std::array<BandStretch, 3> stretches) : stretches_(stretches) {}
  // Integer colour: each band's stretch and transfer tabulated over its type's range.
  ColourComposer(std::array<BandStretch, 3> stretches, const std::array<IntegerRange, 3>& ranges);
  void stretched(const float* rgb, std::size_t n, float* out) const;

  std::array<BandStretch, 3> stretches_;
  std::shared_ptr<const std::array<LinearTable, 3>> tables_;  // null unless integer colour
};

}  // namespace tinct
