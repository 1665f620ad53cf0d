// The per-scene check that the colour lies on the same ground as the bands: the
// shift between the colour's L* and a luminance proxy from the bands, measured by
// phase correlation on windows spread over the scene (median over windows).
#pragma once

#include <functional>
#include <string>
#include <vector>

#include "pairing/colour_composer.hpp"
#include "pairing/pair_config.hpp"

namespace tinct {

// Reads one plane (the luminance proxy, NaN invalid) over a window.
using PlaneReader = std::function<void(int col, int row, int width, int height, float* out)>;

struct ShiftReport {
  double dx_px = 0, dy_px = 0;
  double magnitude_px = 0;
  double magnitude_m = 0;
  int windows = 0;  // windows that gave an estimate
};

// The square windows the measurement reads: `size` px, corners at every (col, row)
// pair of `cols` x `rows`.
struct ShiftWindows {
  int size = 0;  // 0: the grid is too small to measure
  std::vector<int> cols, rows;
};
ShiftWindows shift_windows(const TargetGrid& grid, const CoregistrationSettings& settings);

ShiftReport measure_colour_shift(const PlaneReader& proxy, const ColourReader& colour,
                                 const ColourComposer& composer, const TargetGrid& grid,
                                 const CoregistrationSettings& settings);

// Logs the shift; warns above warn_px; refuses above limit_px unless allowed.
void judge_shift(const ShiftReport& shift, const CoregistrationSettings& settings,
                 const std::string& scene_id);

}  // namespace tinct
