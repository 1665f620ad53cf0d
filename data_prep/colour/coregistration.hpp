// Measures the residual shift between two co-registered single-channel images (the
// colour's L* against a luminance proxy from the bands) by phase correlation on a grid
// of windows, combined by the median. It estimates a translation only: no rotation,
// scale or local warps, and it does not resample anything.
#pragma once

#include <opencv2/core.hpp>

namespace tinct {

// Sign convention: dx > 0 means `moving`'s content lies dx pixels to the right of
// `reference`'s (moving(x, y) ~ reference(x - dx, y - dy)); dy > 0 means lower down.
struct ShiftEstimate {
  double dx = 0, dy = 0;
  double magnitude() const;
  int windows_used = 0;  // 0: no window was usable, dx and dy mean nothing
};

// Windows whose phase-correlation peak (1 for a pure translation) is below this are ignored.
constexpr double kMinPhaseResponse = 0.05;
// Windows with less than this fraction of finite pixels are ignored.
constexpr double kMinValidFraction = 0.5;
// Windows whose standard deviation (in either image) is below this fraction of the
// median over all windows are ignored: flat water, cloud or saturation.
constexpr double kMinTextureFraction = 0.1;

// The smallest window the estimator takes (a scene smaller than this is not measured).
inline constexpr int kMinShiftWindow = 16;

// reference and moving: CV_32FC1, same size, NaN for invalid pixels (replaced by the
// window's mean before correlating). Up to max_windows windows of window_size pixels
// spread evenly; an image smaller than a window gets one window of the largest power of
// two that fits (at least 16). Measurable shifts: below window_size / 2. Each window's
// peak is refined by an upsampled DFT to 0.01 px (Guizar-Sicairos et al. 2008); on the
// real Landsat 7 subset exact Fourier shifts are recovered as scikit-image's
// phase_cross_correlation recovers them (tests/reference), shifts made by resampling
// within about 0.04 px (the spectrum's high frequencies are weighted down, where
// resampling distorts the phase). Images with no detail at a
// few pixels' scale (strongly blurred or upsampled) can be off by a pixel with a high
// response: phase correlation weighs all frequencies alike.
// Fails (usage) on wrong types, sizes or arguments.
ShiftEstimate estimate_shift(const cv::Mat& reference, const cv::Mat& moving, int window_size,
                             int max_windows);

}  // namespace tinct
