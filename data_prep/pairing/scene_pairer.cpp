#include "pairing/scene_pairer.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <memory>
#include <vector>

#include "chips/chip_plan.hpp"
#include "pairing/colour_composer.hpp"
#include "pairing/coregistration_check.hpp"
#include "raster/scene.hpp"
#include "util/log.hpp"
#include "util/progress.hpp"

namespace tinct {
namespace {

constexpr double kVisibleMin = 400, kVisibleMax = 700;  // nm

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

  ColourReader colour_reader() const {
    return [this](int col, int row, int w, int h, float* out) { read_colour(col, row, w, h, out); };
  }

  PlaneReader proxy_reader() const {
    return [this](int col, int row, int w, int h, float* out) { read_proxy(col, row, w, h, out); };
  }

  ColourComposer fit_colour() const {
    if (!config_.colour.stretched) return ColourComposer::for_byte_colour();  // stretch: none
    std::array<std::string, 3> types;
    if (colour_raster_) {
      types.fill(colour_raster_->data_type());
    } else {
      const auto all = scene_.data_types();
      for (int b = 0; b < 3; ++b) types[b] = all[plan_.colour[b]];
    }
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

  void read_proxy(int col, int row, int w, int h, float* out) const {
    const std::size_t n = static_cast<std::size_t>(w) * h;
    std::vector<float> planes(plan_.bands.size() * n);
    scene_.read(col, row, w, h, planes.data());
    for (std::size_t i = 0; i < n; ++i) {
      double sum = 0;
      for (std::size_t p : plan_.proxy) sum += planes[p * n + i];
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

}  // namespace

ScenePairing pair_scene(const PairConfig& config, const SceneSpec& spec, std::uint64_t scene_number,
                        StoreBuilder& store) {
  const ScenePairer pairer(config, spec);
  const TargetGrid& grid = pairer.scene().grid();
  if (grid.width < config.chips.size || grid.height < config.chips.size) {
    log::warning("scene " + spec.id + ": " + std::to_string(grid.width) + " x " + std::to_string(grid.height) +
                 " px, smaller than one chip (chips.size " + std::to_string(config.chips.size) + "): no chip from it");
  }
  for (const auto& note : pairer.scene().alignment_notes()) log::info("scene " + spec.id + ": aligning " + note);
  const ColourComposer composer = [&] {
    try {
      return pairer.fit_colour();
    } catch (const NoValidColour& e) {
      throw NoValidColour("scene " + spec.id + ": " + e.what() + " (all nodata, masked or clouded)");
    }
  }();
  const ShiftReport shift = measure_colour_shift(pairer.proxy_reader(), pairer.colour_reader(), composer, grid,
                                                 config.coregistration);
  judge_shift(shift, config.coregistration, spec.id);

  ScenePairing result{describe(spec, pairer.scene(), shift), {}};
  const auto windows = plan_chips(grid.width, grid.height, config.chips, scene_number);
  result.tally.planned = static_cast<std::int64_t>(windows.size());
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
  return result;
}

}  // namespace tinct
