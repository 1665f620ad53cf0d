#include "pairing/coregistration_check.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <vector>

#include "colour/coregistration.hpp"
#include "util/error.hpp"
#include "util/log.hpp"

namespace tinct {
namespace {

// Evenly spread window origins along one axis.
std::vector<int> spread(int extent, int window, int count) {
  std::vector<int> origins;
  if (count <= 1 || extent <= window) return {std::max(0, (extent - window) / 2)};
  for (int i = 0; i < count; ++i) origins.push_back(static_cast<int>(std::lround(double(i) * (extent - window) / (count - 1))));
  return origins;
}

std::string format_px(double value) {
  char text[32];
  std::snprintf(text, sizeof(text), "%.2f", value);
  return text;
}

}  // namespace

ShiftWindows shift_windows(const TargetGrid& grid, const CoregistrationSettings& settings) {
  const int window = std::min({settings.window, grid.width, grid.height});
  if (window < kMinShiftWindow) return {};
  const int per_axis = std::max(1, static_cast<int>(std::lround(std::sqrt(double(settings.windows)))));
  return {window, spread(grid.width, window, per_axis), spread(grid.height, window, per_axis)};
}

// Windows spread over the scene are laid side by side into one mosaic, so the
// estimator sees them all at once and can drop flat windows (water, cloud) by
// comparing their texture with the others'.
ShiftReport measure_colour_shift(const PlaneReader& proxy, const ColourReader& colour,
                                 const ColourComposer& composer, const TargetGrid& grid,
                                 const CoregistrationSettings& settings) {
  const ShiftWindows windows = shift_windows(grid, settings);
  if (windows.size == 0) return {};  // too small to measure: judge_shift says so
  const int window = windows.size;
  const int per_axis = std::max(1, static_cast<int>(std::lround(std::sqrt(double(settings.windows)))));
  const std::size_t n = static_cast<std::size_t>(window) * window;
  std::vector<float> rgb(3 * n), plane(n), lightness(n);
  cv::Mat reference(per_axis * window, per_axis * window, CV_32FC1);
  cv::Mat moving(per_axis * window, per_axis * window, CV_32FC1);
  const auto& rows = windows.rows;
  const auto& cols = windows.cols;
  for (std::size_t ty = 0; ty < rows.size(); ++ty) {
    for (std::size_t tx = 0; tx < cols.size(); ++tx) {
      proxy(cols[tx], rows[ty], window, window, plane.data());
      colour(cols[tx], rows[ty], window, window, rgb.data());
      composer.lightness(rgb.data(), n, lightness.data());
      const cv::Rect tile(static_cast<int>(tx) * window, static_cast<int>(ty) * window, window, window);
      cv::Mat(window, window, CV_32FC1, plane.data()).copyTo(reference(tile));
      cv::Mat(window, window, CV_32FC1, lightness.data()).copyTo(moving(tile));
    }
  }
  // spread() gives one origin when the scene is a single window wide.
  const cv::Rect used(0, 0, static_cast<int>(cols.size()) * window, static_cast<int>(rows.size()) * window);
  const ShiftEstimate estimate =
      estimate_shift(reference(used).clone(), moving(used).clone(), window, per_axis * per_axis);
  ShiftReport report;
  report.windows = estimate.windows_used;
  if (report.windows == 0) return report;
  report.dx_px = estimate.dx;
  report.dy_px = estimate.dy;
  report.magnitude_px = std::hypot(report.dx_px, report.dy_px);
  report.magnitude_m = report.magnitude_px * grid.pixel_size();
  return report;
}

void judge_shift(const ShiftReport& shift, const CoregistrationSettings& settings, const std::string& scene_id) {
  if (shift.windows == 0) {
    log::warning("scene " + scene_id + ": colour co-registration could not be measured (no window "
                 "with enough texture); check the colour source by eye");
    return;
  }
  const std::string text = "scene " + scene_id + ": colour shift " + format_px(shift.magnitude_px) +
                           " px (" + format_px(shift.magnitude_m) + " m; dx " + format_px(shift.dx_px) +
                           ", dy " + format_px(shift.dy_px) + " px, " + std::to_string(shift.windows) +
                           " windows)";
  if (shift.magnitude_px > settings.limit_px && !settings.allow_large_shift) {
    fail_runtime(text + " exceeds coregistration.limit_px " + format_px(settings.limit_px) +
                 "; the colour and the bands do not show the same ground. Co-register the colour "
                 "raster, or set coregistration.allow_large_shift: true to pair anyway");
  }
  if (shift.magnitude_px > settings.warn_px) {
    log::warning(text + " is above " + format_px(settings.warn_px) + " px");
  } else {
    log::info(text);
  }
}

}  // namespace tinct
