#include "mapping/scene_mapper.hpp"

#include <algorithm>
#include <chrono>
#include <cstdio>

#include "mapping/map_products.hpp"
#include "mapping/quicklook.hpp"
#include "mapping/window_cells.hpp"
#include "mapping/window_layout.hpp"
#include "raster/crs.hpp"
#include "raster/scene.hpp"
#include "util/log.hpp"
#include "util/progress.hpp"
#include "util/stage_times.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

constexpr int kStripWindowRows = 32;       // at most; a multiple of every aoa_step
constexpr double kStripBytes = 64.0 * 1024 * 1024;  // scene values held at once
constexpr int kTileWindowColumns = 24;  // at least: tile activations stay well within the memory goal
// Pixels of a dense tile at most, unless kTileWindowColumns take more: the tile of a full
// strip of 64 px windows (32 rows by 24 columns, 560 x 432 px), within the memory goal. A
// lower strip (a wide scene's) takes more columns, so fewer pixels sit in the overlap
// encoded twice (4096 px scene: 46 columns, 6 % overlap across instead of 12 %).
constexpr double kTilePixels = 560.0 * 432.0;

// Window columns per dense tile for a strip `height` pixels high.
int tile_window_columns(const WindowLayout& layout, int height) {
  const int fit = static_cast<int>((kTilePixels / height - layout.size) / layout.stride) + 1;
  return std::max(kTileWindowColumns, fit);
}

void run_dense(MapModel& model, const SceneStrip& strip, const WindowLayout& layout, int rows, WindowOutputs& out) {
  std::vector<float> tile;
  WindowOutputs part;
  const int tile_columns = tile_window_columns(layout, strip.height());
  for (int c0 = 0; c0 < layout.columns; c0 += tile_columns) {
    const int columns = std::min(tile_columns, layout.columns - c0);
    const int width = (columns - 1) * layout.stride + layout.size;
    tile.resize(static_cast<std::size_t>(strip.bands()) * strip.height() * width);
    strip.copy(c0 * layout.stride, 0, width, strip.height(), tile.data());
    model.dense(tile.data(), strip.height(), width, layout.stride, part);
    for (int r = 0; r < rows; ++r) {
      for (int c = 0; c < columns; ++c) {
        out.copy_window(part, static_cast<std::size_t>(r) * columns + c,
                        static_cast<std::size_t>(r) * layout.columns + c0 + c);
      }
    }
  }
}

void run_exact(MapModel& model, const SceneStrip& strip, const WindowLayout& layout,
               const std::vector<std::size_t>& windows, int batch, WindowOutputs& out) {
  const std::size_t window_values = static_cast<std::size_t>(strip.bands()) * layout.size * layout.size;
  std::vector<float> inputs;
  WindowOutputs part;
  for (std::size_t start = 0; start < windows.size(); start += static_cast<std::size_t>(batch)) {
    const std::size_t count = std::min(windows.size() - start, static_cast<std::size_t>(batch));
    inputs.resize(count * window_values);
    for (std::size_t i = 0; i < count; ++i) {
      const auto w = static_cast<int>(windows[start + i]);
      const int row = w / layout.columns, col = w % layout.columns;
      strip.copy(col * layout.stride, row * layout.stride, layout.size, layout.size, inputs.data() + i * window_values);
    }
    model.exact(inputs.data(), static_cast<int>(count), part);
    for (std::size_t i = 0; i < count; ++i) out.copy_window(part, i, windows[start + i]);
  }
}

// aoa.tif's rows whose cells lie in this strip, from exact windows (step > 1: the window in
// the middle of each coarse cell; step 1: the cells themselves); fine cells take their coarse
// cell's index and mask.
std::vector<std::vector<CellValues>> applicability_rows(MapModel& model, const SceneStrip& strip,
                                                        const WindowLayout& layout, int first, int rows, int step,
                                                        const MapContext& context, std::vector<CellValues>& cells) {
  const auto columns = static_cast<std::size_t>(layout.columns);
  std::vector<std::vector<CellValues>> coarse;
  const int coarse_columns = (layout.columns + step - 1) / step;
  std::vector<std::size_t> chosen;  // strip window of each coarse cell
  for (int i = first / step; i * step < first + rows; ++i) {
    const int row = applicability_window(i, step, layout.rows) - first;
    for (int j = 0; j < coarse_columns; ++j) {
      chosen.push_back(static_cast<std::size_t>(row) * columns + applicability_window(j, step, layout.columns));
    }
  }
  std::vector<CellValues> picked;
  for (std::size_t w : chosen) picked.push_back(cells[w]);
  if (step > 1) {
    std::vector<std::size_t> valid;
    for (std::size_t w : chosen) {
      if (cells[w].valid) valid.push_back(w);
    }
    const std::size_t f = static_cast<std::size_t>(model.feature_count());
    WindowOutputs exact;
    exact.assign_zero(cells.size(), model.classes().size(), f);
    run_exact(model, strip, layout, valid, context.settings.batch, exact);
    std::vector<float> features(chosen.size() * f);
    for (std::size_t c = 0; c < chosen.size(); ++c) {
      std::copy_n(exact.features.begin() + chosen[c] * f, f, features.begin() + c * f);
    }
    fill_applicability(features.data(), static_cast<int>(f), context.evidence, context.threads, picked);
    for (int r = 0; r < rows; ++r) {
      for (std::size_t c = 0; c < columns; ++c) {
        const CellValues& from = picked[static_cast<std::size_t>((first + r) / step - first / step) * coarse_columns +
                                        c / step];
        CellValues& cell = cells[static_cast<std::size_t>(r) * columns + c];
        cell.aoa_index = from.aoa_index;
        cell.inside = from.valid ? from.inside : true;
      }
    }
  }
  for (std::size_t start = 0; start < picked.size(); start += static_cast<std::size_t>(coarse_columns)) {
    coarse.emplace_back(picked.begin() + start, picked.begin() + start + coarse_columns);
  }
  return coarse;
}

// Window rows per strip: as many as keep the strip within kStripBytes, a multiple of `step`.
int strip_window_rows(const WindowLayout& layout, int bands, int step) {
  const double pixel_rows = kStripBytes / (4.0 * bands * layout.pixel_columns());
  const int fit = static_cast<int>((pixel_rows - layout.size) / layout.stride) + 1;
  return std::max(step, std::min(kStripWindowRows, fit) / step * step);
}

// Seconds spent per stage of a scene's loop, for the log (where a map's time goes).
struct StageSeconds {
  StageTime read, model, cells, applicability, write;

  std::string text() const {
    char line[320];
    std::snprintf(line, sizeof(line), "reading %.1f s, model %.1f s, cells %.1f s, applicability windows %.1f s, "
                  "writing %.1f s; CPU: reading %.2f s, model %.2f s, cells %.2f s, applicability windows %.2f s, "
                  "writing %.2f s", read.wall, model.wall, cells.wall, applicability.wall, write.wall, read.cpu,
                  model.cpu, cells.cpu, applicability.cpu, write.cpu);
    return line;
  }
};

std::string crs_units(const std::string& wkt) { return crs_is_geographic(wkt) ? "degree" : "m"; }

}  // namespace

InputEncoding input_encoding(const MapSettings& settings, const BandNormalisation& normalisation) {
  InputEncoding encoding;
  encoding.round_to_integers = settings.inputs.uint16_storage;
  for (std::size_t b = 0; b < normalisation.bands.size(); ++b) {
    encoding.scale.push_back(settings.sensor_given ? settings.profile.scale : settings.inputs.scale[b]);
    encoding.offset.push_back(settings.sensor_given ? settings.profile.effective_offset() : settings.inputs.offset[b]);
    encoding.mean.push_back(static_cast<float>(normalisation.mean[b]));
    encoding.inverse_std.push_back(static_cast<float>(1.0 / normalisation.std[b]));
  }
  return encoding;
}

SceneMapSummary map_scene(const SceneSpec& spec, const MapContext& context, const fs::path& folder) {
  const auto start = std::chrono::steady_clock::now();
  const MapSettings& s = context.settings;
  MapModel& model = context.model;
  const Scene scene(spec, s.profile, s.inputs.bands, s.resolution, s.align);
  for (const auto& note : scene.alignment_notes()) log::info("map: scene " + spec.id + ": " + note);
  const WindowLayout layout = window_layout(scene.grid(), model.chip_size(), s.stride, spec.id);
  const InputEncoding encoding = input_encoding(s, model.normalisation());

  ProductSpec product{layout, scene.grid().crs_wkt, model.classes(), s.probabilities,
                      context.evidence.applicability.has_value(), 1, context.metadata};
  product.metadata["TINCT_SCENE"] = spec.id;
  product.ensemble = model.is_ensemble();
  const int step = s.applicability_step();
  product.aoa_step = step;
  MapProducts products(folder, product);
  Quicklook quicklook(layout.columns, layout.rows, layout.cells[1], crs_units(scene.grid().crs_wkt), model.classes(),
                      "tinct map: " + spec.id + " (" + s.model_name() + ", " + to_string(s.mode) + ")");

  const std::size_t k = model.classes().size(), f = static_cast<std::size_t>(model.feature_count());
  SceneMapSummary summary;
  SceneStrip strip;
  WindowOutputs outputs;
  std::vector<CellValues> row_cells(static_cast<std::size_t>(layout.columns));
  Progress progress("map " + spec.id, layout.rows, "window rows");
  const int strip_rows = strip_window_rows(layout, static_cast<int>(s.inputs.bands.size()), step);
  StageClock clock;
  StageSeconds stages;
  for (int first = 0; first < layout.rows; first += strip_rows) {
    const int rows = std::min(strip_rows, layout.rows - first);
    clock.start();
    strip.read(scene, layout, encoding, first, rows);
    const std::size_t windows = static_cast<std::size_t>(rows) * layout.columns;
    outputs.assign_zero(windows, k, f);
    std::vector<std::size_t> valid;
    for (std::size_t w = 0; w < windows; ++w) {
      const int row = static_cast<int>(w / layout.columns), col = static_cast<int>(w % layout.columns);
      if (strip.valid_fraction(col, row) >= s.min_valid) valid.push_back(w);
    }
    clock.stop(stages.read);
    clock.start();
    if (s.mode == MapMode::dense) run_dense(model, strip, layout, rows, outputs);
    else run_exact(model, strip, layout, valid, s.batch, outputs);
    clock.stop(stages.model);
    clock.start();
    std::vector<CellValues> cells(windows);
    for (std::size_t w : valid) cells[w].valid = true;
    fill_cells(outputs, static_cast<int>(k), static_cast<int>(f), context.evidence, context.threads, step == 1,
               cells);
    clock.stop(stages.cells);
    if (context.evidence.applicability) {
      clock.start();
      const auto coarse_rows = applicability_rows(model, strip, layout, first, rows, step, context, cells);
      clock.stop(stages.applicability);
      for (const auto& coarse_row : coarse_rows) products.write_applicability_row(coarse_row);
    }
    clock.start();
    for (int r = 0; r < rows; ++r) {
      std::copy_n(cells.begin() + static_cast<std::size_t>(r) * layout.columns, layout.columns, row_cells.begin());
      products.write_row(row_cells);
      quicklook.add_row(first + r, row_cells);
    }
    clock.stop(stages.write);
    summary.valid += static_cast<std::int64_t>(valid.size());
    for (std::size_t w : valid) summary.outside += cells[w].inside ? 0 : 1;
    progress.update(first + rows);
  }
  progress.finish();
  clock.start();
  products.finish();
  quicklook.write(folder / "quicklook.png");
  clock.stop(stages.write);
  log::info("map: " + spec.id + ": " + stages.text());
  summary.cells = static_cast<std::int64_t>(layout.columns) * layout.rows;
  summary.crs_wkt = scene.grid().crs_wkt;
  summary.megapixels = static_cast<double>(scene.grid().width) * scene.grid().height / 1e6;
  summary.seconds = std::chrono::duration<double>(std::chrono::steady_clock::now() - start).count();
  return summary;
}

}  // namespace tinct
