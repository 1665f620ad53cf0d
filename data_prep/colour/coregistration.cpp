// Phase correlation per window (OpenCV, Hann window). Each window is centred on its
// mean, its invalid pixels set to that mean and faded in around holes; the window
// estimates are combined by the median.
#include "colour/coregistration.hpp"

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <cstdlib>
#include <string>
#include <utility>
#include <vector>

#include <opencv2/imgproc.hpp>

#include "util/error.hpp"
#include "util/running_stats.hpp"

namespace tinct {

namespace {

constexpr int kMinWindow = 16;
constexpr double kHoleTaper = 8.0;  // pixels
constexpr double kPi = 3.14159265358979323846;

struct Grid {
  int nx = 0, ny = 0;
};

// The grid of non-overlapping windows with the most windows up to max_windows, the
// squarest among equals.
Grid window_grid(int fit_x, int fit_y, int max_windows) {
  Grid best;
  for (int nx = 1; nx <= fit_x; ++nx) {
    const int ny = std::min(fit_y, max_windows / nx);
    if (ny < 1) break;
    const int count = nx * ny, best_count = best.nx * best.ny;
    const bool squarer = count == best_count && std::abs(nx - ny) < std::abs(best.nx - best.ny);
    if (count > best_count || squarer) best = {nx, ny};
  }
  return best;
}

// n window origins spread evenly from 0 to length - window (centred when n == 1).
std::vector<int> origins(int n, int length, int window) {
  if (n == 1) return {(length - window) / 2};
  std::vector<int> result;
  for (int i = 0; i < n; ++i) result.push_back(i * (length - window) / (n - 1));
  return result;
}

struct PreparedWindow {
  cv::Mat pixels;  // CV_32F, zero mean, no NaN
  double std = 0;
  bool valid = false;
};

// Filled holes have sharp rims that correlate like texture; fading the pixels to the
// mean over kHoleTaper pixels around each hole (as the Hann window does at the border)
// keeps them from pulling the peak.
void taper_holes(cv::Mat& centred, const cv::Mat& valid) {
  cv::Mat distance;
  cv::distanceTransform(valid, distance, cv::DIST_L2, cv::DIST_MASK_PRECISE);
  for (int y = 0; y < centred.rows; ++y) {
    float* row = centred.ptr<float>(y);
    const float* d = distance.ptr<float>(y);
    for (int x = 0; x < centred.cols; ++x) {
      if (d[x] >= kHoleTaper) continue;
      row[x] *= static_cast<float>(0.5 - 0.5 * std::cos(kPi * d[x] / kHoleTaper));
    }
  }
}

RunningStats finite_stats(const cv::Mat& window) {
  RunningStats stats;
  for (int y = 0; y < window.rows; ++y) {
    const float* row = window.ptr<float>(y);
    for (int x = 0; x < window.cols; ++x)
      if (std::isfinite(row[x])) stats.add(row[x]);
  }
  return stats;
}

// Subtracting the mean matters beyond the NaN fill: the Hann window times a non-zero
// mean is a pattern common to both images at zero shift, which pulls the peak to 0.
PreparedWindow prepare(const cv::Mat& image, const cv::Rect& rect) {
  PreparedWindow out;
  out.pixels = image(rect).clone();
  const RunningStats stats = finite_stats(out.pixels);
  const auto total = static_cast<std::int64_t>(out.pixels.total());
  if (stats.count() < kMinValidFraction * static_cast<double>(total)) return out;
  cv::Mat valid(out.pixels.size(), CV_8U);
  for (int y = 0; y < out.pixels.rows; ++y) {
    float* row = out.pixels.ptr<float>(y);
    std::uint8_t* ok = valid.ptr<std::uint8_t>(y);
    for (int x = 0; x < out.pixels.cols; ++x) {
      ok[x] = std::isfinite(row[x]) ? 255 : 0;
      row[x] = ok[x] ? static_cast<float>(row[x] - stats.mean()) : 0.0f;
    }
  }
  if (stats.count() < total) taper_holes(out.pixels, valid);
  out.std = stats.population_std();
  out.valid = out.std > 0;
  return out;
}

double median(std::vector<double> values) {
  std::sort(values.begin(), values.end());
  const std::size_t n = values.size();
  return n % 2 == 1 ? values[n / 2] : 0.5 * (values[n / 2 - 1] + values[n / 2]);
}

int largest_power_of_two_up_to(int n) {
  int p = 1;
  while (p * 2 <= n) p *= 2;
  return p;
}

void check_inputs(const cv::Mat& reference, const cv::Mat& moving, int window_size,
                  int max_windows) {
  if (reference.type() != CV_32FC1 || moving.type() != CV_32FC1)
    fail_usage("estimate_shift: both images must be single-channel float (CV_32FC1)");
  if (reference.size() != moving.size() || reference.empty())
    fail_usage("estimate_shift: images must be non-empty and the same size (got " +
               std::to_string(reference.cols) + "x" + std::to_string(reference.rows) + " and " +
               std::to_string(moving.cols) + "x" + std::to_string(moving.rows) + ")");
  if (window_size < kMinWindow || max_windows < 1)
    fail_usage("estimate_shift: window_size must be >= " + std::to_string(kMinWindow) +
               " and max_windows >= 1 (got " + std::to_string(window_size) + ", " +
               std::to_string(max_windows) + ")");
}

struct WindowPlan {
  int size = 0;
  std::vector<cv::Rect> rects;
};

WindowPlan plan_windows(cv::Size image, int window_size, int max_windows) {
  const int shortest = std::min(image.width, image.height);
  if (shortest < window_size) {
    const int size = largest_power_of_two_up_to(shortest);
    if (size < kMinWindow) return {};
    return {size, {cv::Rect((image.width - size) / 2, (image.height - size) / 2, size, size)}};
  }
  const Grid grid = window_grid(image.width / window_size, image.height / window_size, max_windows);
  WindowPlan plan{window_size, {}};
  for (int y : origins(grid.ny, image.height, window_size))
    for (int x : origins(grid.nx, image.width, window_size))
      plan.rects.emplace_back(x, y, window_size, window_size);
  return plan;
}

using WindowPair = std::pair<PreparedWindow, PreparedWindow>;

// Window pairs with enough valid pixels in both images and texture not far below the
// median window's.
std::vector<WindowPair> usable_pairs(const cv::Mat& reference, const cv::Mat& moving,
                                     const std::vector<cv::Rect>& rects) {
  std::vector<WindowPair> pairs;
  std::vector<double> ref_stds, mov_stds;
  for (const cv::Rect& rect : rects) {
    WindowPair pair{prepare(reference, rect), prepare(moving, rect)};
    if (!pair.first.valid || !pair.second.valid) continue;
    ref_stds.push_back(pair.first.std);
    mov_stds.push_back(pair.second.std);
    pairs.push_back(std::move(pair));
  }
  if (pairs.empty()) return pairs;
  const double ref_floor = kMinTextureFraction * median(ref_stds);
  const double mov_floor = kMinTextureFraction * median(mov_stds);
  pairs.erase(std::remove_if(pairs.begin(), pairs.end(),
                             [&](const WindowPair& pair) {
                               return pair.first.std < ref_floor || pair.second.std < mov_floor;
                             }),
              pairs.end());
  return pairs;
}

}  // namespace

double ShiftEstimate::magnitude() const { return std::hypot(dx, dy); }

ShiftEstimate estimate_shift(const cv::Mat& reference, const cv::Mat& moving, int window_size,
                             int max_windows) {
  check_inputs(reference, moving, window_size, max_windows);
  const WindowPlan plan = plan_windows(reference.size(), window_size, max_windows);
  if (plan.rects.empty()) return {};
  cv::Mat hann;
  cv::createHanningWindow(hann, cv::Size(plan.size, plan.size), CV_32F);
  std::vector<double> dxs, dys;
  for (const WindowPair& pair : usable_pairs(reference, moving, plan.rects)) {
    double response = 0;
    const cv::Point2d shift =
        cv::phaseCorrelate(pair.first.pixels, pair.second.pixels, hann, &response);
    if (!(response >= kMinPhaseResponse)) continue;
    dxs.push_back(shift.x);
    dys.push_back(shift.y);
  }
  ShiftEstimate estimate;
  estimate.windows_used = static_cast<int>(dxs.size());
  if (estimate.windows_used == 0) return estimate;
  estimate.dx = median(dxs);
  estimate.dy = median(dys);
  return estimate;
}

}  // namespace tinct
