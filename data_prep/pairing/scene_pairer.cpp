#include "pairing/scene_pairer.hpp"

#include <algorithm>
#include <cmath>
#include <future>
#include <limits>
#include <memory>
#include <optional>
#include <vector>

#include "chips/chip_plan.hpp"
#include "pairing/colour_composer.hpp"
#include "pairing/colour_spill.hpp"
#include "pairing/coregistration_check.hpp"
#include "pairing/window_capture.hpp"
#include "raster/scene.hpp"
#include "util/log.hpp"
#include "util/progress.hpp"
#include "util/stage_times.hpp"

namespace tinct {
namespace {

constexpr double kVisibleMin = 400, kVisibleMax = 700;  // nm
// Rows of a strip in the single pass: reads that span many tiles, so GDAL decodes
// them on all cores (a decoded tile stays in GDAL's block cache for the next strip);
// two strips of a 12-band 10 000 px wide scene stay near 120 MB.
constexpr int kStripRows = 128;

std::size_t add_band(std::vector<std::string>& bands, const std::string& name) {
  const auto found = std::find(bands.begin(), bands.end(), name);
  if (found != bands.end()) return static_cast<std::size_t>(found - bands.begin());
  bands.push_back(name);
  return bands.size() - 1;
}

// Visible bands of the scene give the luminance proxy; without any, the inputs do.
std::vector<std::string> proxy_bands(const PairConfig& config, const SceneSpec& spec) {
  std::vector<std::string> visible;
  for (const auto& band : spec.bands) {
    const SensorBand* info = config.sensor.band(band.name);
    if (info && info->centre_nm >= kVisibleMin && info->centre_nm <= kVisibleMax) visible.push_back(band.name);
  }
  return visible.empty() ? config.inputs : visible;
}

// The planes a scene read returns, and where each role's bands sit among them.
struct BandPlan {
  std::vector<std::string> bands;
  std::vector<std::size_t> inputs, colour, proxy;
};

BandPlan plan_bands(const PairConfig& config, const SceneSpec& spec) {
  BandPlan plan;
  for (const auto& b : config.inputs) plan.inputs.push_back(add_band(plan.bands, b));
  for (const auto& b : config.colour.bands) plan.colour.push_back(add_band(plan.bands, b));
  for (const auto& b : proxy_bands(config, spec)) plan.proxy.push_back(add_band(plan.bands, b));
  return plan;
}

void copy_planes(const float* planes, const std::vector<std::size_t>& which, std::size_t n, float* out) {
  for (std::size_t k = 0; k < which.size(); ++k) {
    std::copy(planes + which[k] * n, planes + (which[k] + 1) * n, out + k * n);
  }
}

class ScenePairer {
 public:
  ScenePairer(const PairConfig& config, const SceneSpec& spec)
      : config_(config),
        plan_(plan_bands(config, spec)),
        scene_(spec, config.sensor, plan_.bands, config.resolution, config.align) {
    if (config.colour.from_raster) {
      require_overlap(Raster::open(*spec.colour_raster), scene_.grid(), "colour raster");
      colour_raster_ = std::make_unique<AlignedSource>(*spec.colour_raster, std::vector<int>{1, 2, 3},
                                                       scene_.grid(), config.align, std::nullopt);
    }
  }

  const Scene& scene() const { return scene_; }

  // Readers of the colour and of the luminance proxy: from `capture` where it holds the
  // window, else from the scene.
  ColourReader colour_reader(const WindowCapture* capture = nullptr) const {
    return [this, capture](int col, int row, int w, int h, float* out) {
      if (capture && capture->read(col, row, w, h, plan_.colour, out)) return;
      read_colour(col, row, w, h, out);
    };
  }

  PlaneReader proxy_reader(const WindowCapture* capture = nullptr) const {
    return [this, capture](int col, int row, int w, int h, float* out) { read_proxy(col, row, w, h, capture, out); };
  }

  // The co-registration check's windows, kept from the single pass's strips.
  WindowCapture shift_capture(const CoregistrationSettings& settings) const {
    const ShiftWindows windows = shift_windows(scene_.grid(), settings);
    std::vector<WindowCapture::Window> corners;
    for (int row : windows.rows) {
      for (int col : windows.cols) corners.push_back({col, row});
    }
    std::vector<std::size_t> planes = plan_.colour;
    for (std::size_t p : plan_.proxy) {
      if (std::find(planes.begin(), planes.end(), p) == planes.end()) planes.push_back(p);
    }
    return WindowCapture(windows.size > 0 ? corners : std::vector<WindowCapture::Window>{}, windows.size, planes);
  }

  std::array<std::string, 3> colour_types() const {
    std::array<std::string, 3> types;
    if (colour_raster_) {
      types.fill(colour_raster_->data_type());
    } else {
      const auto all = scene_.data_types();
      for (int b = 0; b < 3; ++b) types[b] = all[plan_.colour[b]];
    }
    return types;
  }

  // The single pass reads whole strips of the scene's own bands: it needs chips in
  // row order and, for a stretch, integer colour it can histogram as it goes.
  std::optional<StretchFit> one_pass_fit(const std::vector<ChipWindow>& windows) const {
    if (colour_raster_ || !config_.colour.stretched) return std::nullopt;
    const auto by_row = [](const ChipWindow& a, const ChipWindow& b) { return a.row < b.row; };
    if (!std::is_sorted(windows.begin(), windows.end(), by_row)) return std::nullopt;
    return StretchFit::for_types(colour_types());
  }

  // Rows [top, top + rows) of every planned band, full width: planes of width x rows.
  void read_strip(int top, int rows, std::vector<float>& strip) const {
    const std::size_t n = static_cast<std::size_t>(scene_.grid().width) * rows;
    strip.resize(plan_.bands.size() * n);
    scene_.read(0, top, scene_.grid().width, rows, strip.data());
  }

  // Adds rows [from, to) of the strip starting at `top` to the stretch histograms.
  void count_colour(const std::vector<float>& strip, int top, int rows, int from, int to, StretchFit& fit) const {
    const std::size_t width = static_cast<std::size_t>(scene_.grid().width);
    const std::size_t n = width * rows, skip = width * (from - top), count = width * (to - from);
    const float* base = strip.data() + skip;
    fit.add(base + plan_.colour[0] * n, base + plan_.colour[1] * n, base + plan_.colour[2] * n, count);
  }

  // Rows no chip covers still count for the stretch: read them, colour bands only.
  void count_colour_rows(int from, int to, StretchFit& fit) const {
    if (from >= to) return;
    const Scene colour_view(scene_.spec(), config_.sensor, config_.colour.bands, config_.resolution, config_.align);
    const std::size_t width = static_cast<std::size_t>(scene_.grid().width);
    std::vector<float> rgb;
    for (int top = from; top < to; top += kStripRows) {
      const int rows = std::min(kStripRows, to - top);
      const std::size_t n = width * rows;
      rgb.resize(3 * n);
      colour_view.read(0, top, static_cast<int>(width), rows, rgb.data());
      fit.add(rgb.data(), rgb.data() + n, rgb.data() + 2 * n, n);
    }
  }

  // One chip out of a strip that starts at row `top`: input planes, colour planes
  // (stored values) and validity (every input and colour band finite). Returns the
  // valid fraction.
  double cut_chip(const std::vector<float>& strip, int top, int rows, const ChipWindow& window,
                  std::vector<float>& inputs, std::vector<float>& rgb, std::vector<std::uint8_t>& valid) const {
    const int size = config_.chips.size;
    const std::size_t n = static_cast<std::size_t>(size) * size;
    const std::size_t width = static_cast<std::size_t>(scene_.grid().width);
    const std::size_t plane = width * rows;
    const auto cut = [&](const std::vector<std::size_t>& which, float* out) {
      for (std::size_t k = 0; k < which.size(); ++k) {
        const float* from = strip.data() + which[k] * plane + (window.row - top) * width + window.col;
        for (int r = 0; r < size; ++r) std::copy(from + r * width, from + r * width + size, out + k * n + r * size);
      }
    };
    inputs.resize(plan_.inputs.size() * n);
    cut(plan_.inputs, inputs.data());
    rgb.resize(3 * n);
    cut(plan_.colour, rgb.data());
    valid.assign(n, 1);
    const auto keep_finite = [flags = valid.data(), n](const float* plane) {  // branch-free: it vectorises
      for (std::size_t i = 0; i < n; ++i) flags[i] &= static_cast<std::uint8_t>(std::isfinite(plane[i]));
    };
    for (std::size_t k = 0; k < plan_.inputs.size(); ++k) keep_finite(inputs.data() + k * n);
    for (std::size_t k = 0; k < 3; ++k) keep_finite(rgb.data() + k * n);
    std::size_t count = 0;
    for (std::size_t i = 0; i < n; ++i) count += valid[i];
    return static_cast<double>(count) / static_cast<double>(n);
  }

  ColourComposer fit_colour() const {
    if (!config_.colour.stretched) return ColourComposer::for_byte_colour();  // stretch: none
    const std::array<std::string, 3> types = colour_types();
    // The stretch reads only the colour bands, through a view of its own.
    if (colour_raster_) return ColourComposer::fit(colour_reader(), scene_.grid(), types, config_.colour.stretch);
    const Scene colour_view(scene_.spec(), config_.sensor, config_.colour.bands, config_.resolution, config_.align);
    const ColourReader read = [&](int col, int row, int w, int h, float* out) { colour_view.read(col, row, w, h, out); };
    return ColourComposer::fit(read, scene_.grid(), types, config_.colour.stretch);
  }

  // Reads one window: input planes (stored values), Lab codes and validity.
  // Returns the valid fraction.
  double read_chip(int col, int row, const ColourComposer& composer, std::vector<float>& inputs,
                   std::vector<std::uint8_t>& lab, std::vector<std::uint8_t>& valid) const {
    const int size = config_.chips.size;
    const std::size_t n = static_cast<std::size_t>(size) * size;
    planes_.resize(plan_.bands.size() * n);
    scene_.read(col, row, size, size, planes_.data());
    inputs.resize(plan_.inputs.size() * n);
    copy_planes(planes_.data(), plan_.inputs, n, inputs.data());
    rgb_.resize(3 * n);
    if (colour_raster_) {
      colour_raster_->read(col, row, size, size, rgb_.data());
    } else {
      copy_planes(planes_.data(), plan_.colour, n, rgb_.data());
    }
    valid.assign(n, 1);
    for (std::size_t k = 0; k < plan_.inputs.size(); ++k) {
      for (std::size_t i = 0; i < n; ++i) {
        if (!std::isfinite(inputs[k * n + i])) valid[i] = 0;
      }
    }
    lab.resize(3 * n);
    composer.compose(rgb_.data(), n, lab.data(), valid.data());
    std::size_t count = 0;
    for (std::uint8_t v : valid) count += v;
    return static_cast<double>(count) / static_cast<double>(n);
  }

 private:
  void read_colour(int col, int row, int w, int h, float* out) const {
    if (colour_raster_) {
      colour_raster_->read(col, row, w, h, out);
      return;
    }
    const std::size_t n = static_cast<std::size_t>(w) * h;
    std::vector<float> planes(plan_.bands.size() * n);
    scene_.read(col, row, w, h, planes.data());
    copy_planes(planes.data(), plan_.colour, n, out);
  }

  void read_proxy(int col, int row, int w, int h, const WindowCapture* capture, float* out) const {
    const std::size_t n = static_cast<std::size_t>(w) * h;
    std::vector<float> planes(plan_.bands.size() * n);
    std::vector<std::size_t> where = plan_.proxy;  // each proxy band's plane in `planes`
    if (capture && capture->read(col, row, w, h, plan_.proxy, planes.data())) {
      for (std::size_t k = 0; k < where.size(); ++k) where[k] = k;
    } else {
      scene_.read(col, row, w, h, planes.data());
    }
    for (std::size_t i = 0; i < n; ++i) {
      double sum = 0;
      for (std::size_t p : where) sum += planes[p * n + i];
      out[i] = static_cast<float>(sum / plan_.proxy.size());  // NaN if any band is
    }
  }

  const PairConfig& config_;
  BandPlan plan_;
  Scene scene_;
  std::unique_ptr<AlignedSource> colour_raster_;
  mutable std::vector<float> planes_, rgb_;
};

StoreScene describe(const SceneSpec& spec, const Scene& scene, const ShiftReport& shift) {
  StoreScene entry = store_scene(spec, scene.grid());
  entry.notes["colour_shift_dx_px"] = std::to_string(shift.dx_px);
  entry.notes["colour_shift_dy_px"] = std::to_string(shift.dy_px);
  entry.notes["colour_shift_px"] = std::to_string(shift.magnitude_px);
  entry.notes["colour_shift_m"] = std::to_string(shift.magnitude_m);
  entry.notes["colour_shift_windows"] = std::to_string(shift.windows);
  return entry;
}


// Chips read window by window, after the stretch is fitted in a pass of its own.
void pair_by_windows(const PairConfig& config, const SceneSpec& spec, const ScenePairer& pairer,
                     const std::vector<ChipWindow>& windows, StoreBuilder& store, ScenePairing& result) {
  const TargetGrid& grid = pairer.scene().grid();
  const ColourComposer composer = pairer.fit_colour();
  const ShiftReport shift = measure_colour_shift(pairer.proxy_reader(), pairer.colour_reader(), composer, grid,
                                                 config.coregistration);
  judge_shift(shift, config.coregistration, spec.id);
  result.scene = describe(spec, pairer.scene(), shift);
  std::vector<float> inputs;
  std::vector<std::uint8_t> lab, valid;
  Progress progress("pair " + spec.id, result.tally.planned, "chips");
  std::int64_t seen = 0;
  for (const ChipWindow& window : windows) {
    progress.update(++seen);
    if (config.chips.max_per_scene > 0 && result.tally.written >= config.chips.max_per_scene) break;
    const double valid_fraction = pairer.read_chip(window.col, window.row, composer, inputs, lab, valid);
    if (valid_fraction < config.chips.min_valid) {
      ++result.tally.below_min_valid;
      continue;
    }
    store.add_chip(spec, grid, window.col, window.row, valid_fraction, inputs, valid, lab.data());
    ++result.tally.written;
  }
  progress.finish();
}

// The parked colour of `chips` chips to Lab codes, in batches whose halves are
// composed on two threads, then added to the store in chip order.
void add_parked_colour(ColourSpill& spill, std::int64_t chips, const ColourComposer& composer, std::size_t n,
                       StoreBuilder& store) {
  constexpr std::int64_t kBatch = 64;
  std::vector<float> rgb(static_cast<std::size_t>(kBatch) * 3 * n);
  std::vector<std::uint8_t> lab(rgb.size());
  const auto compose = [&](std::int64_t from, std::int64_t to) {
    std::vector<std::uint8_t> ignored(n);
    for (std::int64_t c = from; c < to; ++c) {
      composer.compose(rgb.data() + c * 3 * n, n, lab.data() + c * 3 * n, ignored.data());
    }
  };
  for (std::int64_t first = 0; first < chips; first += kBatch) {
    const std::int64_t count = std::min(kBatch, chips - first);
    for (std::int64_t c = 0; c < count; ++c) spill.get(rgb.data() + c * 3 * n);
    auto half = std::async(std::launch::async, compose, count / 2, count);
    compose(0, count / 2);
    half.get();
    for (std::int64_t c = 0; c < count; ++c) store.add_colour(lab.data() + c * 3 * n);
  }
}

// Every pixel decoded once: strips of whole tile rows (GDAL decodes a strip's tiles on
// all cores), the stretch histogram and the co-registration windows taken from the same
// strips, the chips' colour parked until the stretch is known and then converted to Lab.
void pair_in_one_pass(const PairConfig& config, const SceneSpec& spec, const ScenePairer& pairer,
                      const std::vector<ChipWindow>& windows, StretchFit fit, StoreBuilder& store,
                      ScenePairing& result) {
  const TargetGrid& grid = pairer.scene().grid();
  const int size = config.chips.size;
  const std::size_t n = static_cast<std::size_t>(size) * size;
  ColourSpill spill(3 * n);
  WindowCapture kept_windows = pairer.shift_capture(config.coregistration);
  std::vector<float> inputs, rgb;
  std::vector<std::uint8_t> valid;
  Progress progress("pair " + spec.id, result.tally.planned, "chips");
  // Strips of whole chip rows, each read while the one before is cut into chips.
  struct Strip {
    std::size_t first, end;
    int top, rows;
  };
  std::vector<Strip> strips;
  for (std::size_t first = 0; first < windows.size();) {
    const int top = windows[first].row;
    std::size_t end = first;
    while (end < windows.size() && windows[end].row + size <= top + std::max(kStripRows, size)) ++end;
    strips.push_back({first, end, top, windows[end - 1].row + size - top});
    first = end;
  }
  std::vector<float> strip, next;
  std::future<void> reading;  // declared after the buffers, so it ends before they do
  const auto read_ahead = [&](std::size_t k) {
    if (k < strips.size()) {
      reading = std::async(std::launch::async, [&pairer, &next, s = strips[k]] { pairer.read_strip(s.top, s.rows, next); });
    }
  };
  read_ahead(0);
  int counted = 0;  // rows [0, counted) are in the stretch histograms
  for (std::size_t k = 0; k < strips.size(); ++k) {
    reading.get();
    std::swap(strip, next);
    read_ahead(k + 1);
    const Strip& s = strips[k];
    kept_windows.add_strip(strip.data(), grid.width, s.top, s.rows);
    pairer.count_colour_rows(counted, s.top, fit);
    if (s.top + s.rows > counted) pairer.count_colour(strip, s.top, s.rows, std::max(s.top, counted), s.top + s.rows, fit);
    counted = std::max(counted, s.top + s.rows);
    for (std::size_t w = s.first; w < s.end; ++w) {
      progress.update(static_cast<std::int64_t>(w) + 1);
      const double valid_fraction = pairer.cut_chip(strip, s.top, s.rows, windows[w], inputs, rgb, valid);
      if (valid_fraction < config.chips.min_valid) {
        ++result.tally.below_min_valid;
        continue;
      }
      store.add_chip_awaiting_colour(spec, grid, windows[w].col, windows[w].row, valid_fraction, inputs, valid);
      spill.put(rgb.data());
      ++result.tally.written;
    }
  }
  pairer.count_colour_rows(counted, grid.height, fit);
  progress.finish();
  stage_done("one-pass");
  const ColourComposer composer = fit.composer(config.colour.stretch);
  // The co-registration check runs beside the colour's conversion: neither needs the other.
  auto measuring = std::async(std::launch::async, [&] {
    return measure_colour_shift(pairer.proxy_reader(&kept_windows), pairer.colour_reader(&kept_windows), composer,
                                grid, config.coregistration);
  });
  spill.rewind();
  add_parked_colour(spill, result.tally.written, composer, n, store);
  const ShiftReport shift = measuring.get();
  stage_done("colour");
  judge_shift(shift, config.coregistration, spec.id);
  result.scene = describe(spec, pairer.scene(), shift);
}

}  // namespace

ScenePairing pair_scene(const PairConfig& config, const SceneSpec& spec, std::uint64_t scene_number,
                        StoreBuilder& store) {
  const ScenePairer pairer(config, spec);
  for (const auto& note : pairer.scene().alignment_notes()) log::info("scene " + spec.id + ": aligning " + note);
  const TargetGrid& grid = pairer.scene().grid();
  if (grid.width < config.chips.size || grid.height < config.chips.size) {
    log::warning("scene " + spec.id + ": " + std::to_string(grid.width) + " x " + std::to_string(grid.height) +
                 " px, smaller than one chip (chips.size " + std::to_string(config.chips.size) + "): no chip from it");
  }
  stage_done("open");
  const auto windows = plan_chips(grid.width, grid.height, config.chips, scene_number);
  ScenePairing result;
  result.tally.planned = static_cast<std::int64_t>(windows.size());
  std::optional<StretchFit> fit = pairer.one_pass_fit(windows);
  try {
    if (fit && config.chips.max_per_scene == 0) {
      pair_in_one_pass(config, spec, pairer, windows, std::move(*fit), store, result);
    } else {
      pair_by_windows(config, spec, pairer, windows, store, result);
    }
  } catch (const NoValidColour& e) {
    throw NoValidColour("scene " + spec.id + ": " + e.what() + " (all nodata, masked or clouded)");
  }
  return result;
}

}  // namespace tinct
