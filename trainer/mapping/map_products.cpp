#include "mapping/map_products.hpp"

#include <algorithm>
#include <cmath>
#include <limits>

#include "mapping/class_palette.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

constexpr float kNaN = std::numeric_limits<float>::quiet_NaN();

GeoTiffSpec base_spec(const ProductSpec& p, PixelType type, const std::string& what) {
  GeoTiffSpec spec;
  spec.width = p.layout.columns;
  spec.height = p.layout.rows;
  spec.type = type;
  spec.crs_wkt = p.crs_wkt;
  spec.geotransform = p.layout.cells;
  spec.metadata = p.metadata;
  spec.metadata["TINCT_PRODUCT"] = what;
  spec.block_size = 256;
  spec.overview_resampling = type == PixelType::float32 ? "AVERAGE" : "NEAREST";
  return spec;
}

std::unique_ptr<GeoTiffWriter> probabilities_writer(const fs::path& folder, const ProductSpec& p) {
  const bool bytes = p.probabilities == ProbabilityType::uint8;
  GeoTiffSpec spec = base_spec(p, bytes ? PixelType::uint8 : PixelType::float32, "class probabilities");
  for (const auto& name : p.classes) {
    OutputBand band{name, {}};
    if (bytes) band.metadata = {{"scale", "probability = value / 250"}};
    spec.bands.push_back(band);
  }
  if (bytes) spec.nodata = kByteNodata;
  else spec.nodata = std::nan("");
  if (bytes) spec.overview_resampling = "AVERAGE";
  return std::make_unique<GeoTiffWriter>(folder / "probabilities.tif", spec);
}

std::unique_ptr<GeoTiffWriter> classes_writer(const fs::path& folder, const ProductSpec& p) {
  GeoTiffSpec spec = base_spec(p, PixelType::uint8, "most probable class");
  std::map<std::string, std::string> names;
  for (std::size_t k = 0; k < p.classes.size(); ++k) names["CLASS_" + std::to_string(k)] = p.classes[k];
  spec.bands.push_back({"class", names});
  spec.nodata = kByteNodata;
  spec.colour_table = class_colours(static_cast<int>(p.classes.size()));
  spec.colour_table.resize(256, kNodataColour);
  return std::make_unique<GeoTiffWriter>(folder / "classes.tif", spec);
}

std::unique_ptr<GeoTiffWriter> uncertainty_writer(const fs::path& folder, const ProductSpec& p) {
  GeoTiffSpec spec = base_spec(p, PixelType::float32, "normalised entropy of the class probabilities");
  spec.bands.push_back({"normalised entropy", {{"range", "0 (certain) to 1 (all classes equally likely)"}}});
  if (p.ensemble) {
    spec.bands.push_back({"members' disagreement: mutual information between class and member / ln K",
                          {{"definition", "entropy of the mean probabilities minus the mean of the members' entropies, "
                                          "over ln K"},
                           {"range", "0 (members agree exactly) to 1"}}});
  }
  spec.nodata = std::nan("");
  return std::make_unique<GeoTiffWriter>(folder / "uncertainty.tif", spec);
}

std::unique_ptr<GeoTiffWriter> aoa_writer(const fs::path& folder, ProductSpec p) {
  p.layout = applicability_layout(p.layout, p.aoa_step);
  GeoTiffSpec spec = base_spec(p, PixelType::float32, "area of applicability (Meyer and Pebesma 2021)");
  spec.metadata["TINCT_AOA_STEP"] = std::to_string(p.aoa_step);
  spec.bands.push_back({"dissimilarity index", {}});
  spec.bands.push_back({"inside area of applicability", {{"values", "1 inside, 0 outside"}}});
  spec.nodata = std::nan("");
  return std::make_unique<GeoTiffWriter>(folder / "aoa.tif", spec);
}

}  // namespace

WindowLayout applicability_layout(const WindowLayout& layout, int step) {
  WindowLayout coarse = layout;
  coarse.columns = (layout.columns + step - 1) / step;
  coarse.rows = (layout.rows + step - 1) / step;
  coarse.cells[1] *= step;
  coarse.cells[5] *= step;
  return coarse;
}

int applicability_window(int index, int step, int windows) { return std::min(index * step + step / 2, windows - 1); }

MapProducts::MapProducts(const fs::path& folder, const ProductSpec& spec) : spec_(spec) {
  probabilities_ = probabilities_writer(folder, spec);
  classes_ = classes_writer(folder, spec);
  uncertainty_ = uncertainty_writer(folder, spec);
  if (spec.aoa) aoa_ = aoa_writer(folder, spec);
}

void MapProducts::write_row(const std::vector<CellValues>& cells) {
  const std::size_t n = cells.size(), k = spec_.classes.size();
  if (spec_.probabilities == ProbabilityType::uint8) {
    bytes_.assign(n * k, kByteNodata);
    for (std::size_t i = 0; i < n; ++i) {
      if (!cells[i].valid) continue;
      for (std::size_t c = 0; c < k; ++c) bytes_[c * n + i] = probability_code(cells[i].probabilities[c]);
    }
    probabilities_->write_rows(bytes_.data(), 1);
  } else {
    floats_.assign(n * k, kNaN);
    for (std::size_t i = 0; i < n; ++i) {
      if (!cells[i].valid) continue;
      for (std::size_t c = 0; c < k; ++c) floats_[c * n + i] = cells[i].probabilities[c];
    }
    probabilities_->write_rows(floats_.data(), 1);
  }
  bytes_.assign(n, kByteNodata);
  for (std::size_t i = 0; i < n; ++i) {
    if (cells[i].valid) bytes_[i] = static_cast<std::uint8_t>(cells[i].predicted);
  }
  classes_->write_rows(bytes_.data(), 1);
  floats_.assign(spec_.ensemble ? 2 * n : n, kNaN);
  for (std::size_t i = 0; i < n; ++i) {
    if (!cells[i].valid) continue;
    floats_[i] = cells[i].uncertainty;
    if (spec_.ensemble) floats_[n + i] = cells[i].disagreement;
  }
  uncertainty_->write_rows(floats_.data(), 1);
}

void MapProducts::write_applicability_row(const std::vector<CellValues>& cells) {
  const std::size_t n = cells.size();
  if (aoa_) {
    floats_.assign(2 * n, kNaN);
    for (std::size_t i = 0; i < n; ++i) {
      if (!cells[i].valid) continue;
      floats_[i] = cells[i].aoa_index;
      floats_[n + i] = cells[i].inside ? 1.0f : 0.0f;
    }
    aoa_->write_rows(floats_.data(), 1);
  }
}

void MapProducts::finish() {
  probabilities_->finish();
  classes_->finish();
  uncertainty_->finish();
  if (aoa_) aoa_->finish();
}

}  // namespace tinct
