// The GeoTIFFs of one scene's map, written row by row (one row of cells = one row of
// windows) into COGs: probabilities.tif (one band per class), classes.tif (Byte, colour
// table), uncertainty.tif (normalised entropy; for an ensemble a second band, the members'
// disagreement) and aoa.tif (index band, inside/outside
// mask band), all on the map grid in the scene's CRS, nodata where a window has too few
// valid pixels, with the caution and the run's provenance in the metadata.
#pragma once

#include <filesystem>
#include <map>
#include <memory>
#include <string>
#include <vector>

#include "mapping/cell_values.hpp"
#include "mapping/map_settings.hpp"
#include "mapping/window_layout.hpp"
#include "raster/geotiff_writer.hpp"

namespace tinct {

struct ProductSpec {
  WindowLayout layout;
  std::string crs_wkt;
  std::vector<std::string> classes;
  ProbabilityType probabilities = ProbabilityType::uint8;
  bool aoa = true;
  int aoa_step = 1;  // aoa.tif's cells hold aoa_step x aoa_step cells of the others
  std::map<std::string, std::string> metadata;  // caution and provenance
  bool ensemble = false;  // uncertainty.tif gets a second band, the members' disagreement
};

// aoa.tif's grid: ceil(columns / step) x ceil(rows / step) cells, same origin, pixels step
// times larger; its cell (i, j) takes the window at the middle of the cells it covers.
WindowLayout applicability_layout(const WindowLayout& layout, int step);
// The window (row or column) whose features give aoa.tif's cell `index`.
int applicability_window(int index, int step, int windows);

class MapProducts {
 public:
  MapProducts(const std::filesystem::path& folder, const ProductSpec& spec);
  // One row of cells, layout.columns of them.
  void write_row(const std::vector<CellValues>& cells);
  // One row of aoa.tif's cells.
  void write_applicability_row(const std::vector<CellValues>& cells);
  void finish();

 private:
  ProductSpec spec_;
  std::unique_ptr<GeoTiffWriter> probabilities_, classes_, uncertainty_, aoa_;
  std::vector<float> floats_;
  std::vector<std::uint8_t> bytes_;
};

}  // namespace tinct
