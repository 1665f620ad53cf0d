// quicklook.png of a scene's map: the class map (cells scaled up to a readable size),
// nodata in light grey, cells outside the area of applicability hatched dark, a legend,
// a scale bar and a grid-north arrow, and the caution in the footer. Only a thinned copy
// of the class map is held (at most kMaxCells cells along a side).
#pragma once

#include <cstdint>
#include <filesystem>
#include <string>
#include <vector>

#include "mapping/cell_values.hpp"

namespace tinct {

class Quicklook {
 public:
  static constexpr int kMaxCells = 1024;

  // cell_size: map units per cell; `units` of the CRS ("m" or "degree").
  Quicklook(int columns, int rows, double cell_size, std::string units, std::vector<std::string> classes,
            std::string title);
  void add_row(int row, const std::vector<CellValues>& cells);
  // PNG, written atomically.
  void write(const std::filesystem::path& file) const;

 private:
  int step_ = 1, columns_ = 0, rows_ = 0;
  double cell_size_ = 0;
  std::string units_;
  std::vector<std::string> classes_;
  std::string title_;
  std::vector<std::uint8_t> class_;    // kNodata where no data
  std::vector<std::uint8_t> outside_;  // 1 outside the area of applicability
};

}  // namespace tinct
