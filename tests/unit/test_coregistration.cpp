// estimate_shift on seeded synthetic texture (noise smoothed at several scales, so it
// has detail at every frequency like real imagery) with a known sub-pixel shift made by
// cv::warpAffine; the truth is the shift we applied, no outside values.
#include <catch2/catch.hpp>

#include <cmath>
#include <limits>

#include <opencv2/imgproc.hpp>

#include "colour/coregistration.hpp"
#include "util/error.hpp"

namespace {

constexpr int kSize = 512;
constexpr int kMargin = 32;  // crop from a larger source so no border enters the image

// Noise smoothed at sigma 1, 2, 4, 8 and weighted by sigma (a roughly 1/f spectrum),
// scaled to L*-like values (mean 50, sd 15). A single strong blur would not do: phase
// correlation whitens the spectrum, and where a Gaussian leaves only rounding noise
// that noise decides the peak.
cv::Mat textured_source(unsigned seed) {
  const int side = kSize + 2 * kMargin;
  cv::RNG rng(seed);
  cv::Mat sum = cv::Mat::zeros(side, side, CV_32F);
  for (double sigma : {1.0, 2.0, 4.0, 8.0}) {
    cv::Mat noise(side, side, CV_32F);
    rng.fill(noise, cv::RNG::NORMAL, 0.0, 1.0);
    cv::GaussianBlur(noise, noise, cv::Size(0, 0), sigma);
    sum += noise * sigma;
  }
  cv::Scalar mean, sd;
  cv::meanStdDev(sum, mean, sd);
  return (sum - mean[0]) * (15.0 / sd[0]) + 50.0;
}

cv::Mat crop(const cv::Mat& source) {
  return source(cv::Rect(kMargin, kMargin, kSize, kSize)).clone();
}

// The source translated by (dx, dy) (content moves right by dx, down by dy), cropped.
cv::Mat shifted_crop(const cv::Mat& source, double dx, double dy) {
  const cv::Mat transform = (cv::Mat_<double>(2, 3) << 1, 0, dx, 0, 1, dy);
  cv::Mat moved;
  cv::warpAffine(source, moved, transform, source.size(), cv::INTER_CUBIC, cv::BORDER_REFLECT);
  return crop(moved);
}

void punch_holes(cv::Mat& image, unsigned seed, int count, int radius) {
  cv::RNG rng(seed);
  const double nan = std::numeric_limits<double>::quiet_NaN();
  for (int i = 0; i < count; ++i) {
    const cv::Point centre(rng.uniform(0, image.cols), rng.uniform(0, image.rows));
    cv::circle(image, centre, radius, cv::Scalar(nan), cv::FILLED);
  }
}

double error(const tinct::ShiftEstimate& shift, double dx, double dy) {
  return std::hypot(shift.dx - dx, shift.dy - dy);
}

}  // namespace

// Within 0.05 px: the shift is made by cubic resampling (OpenCV places positions on a
// 1/32 px grid), whose phase errors at high frequencies the pass-band weight keeps out.
TEST_CASE("shift: a known sub-pixel shift of (1.3, -0.7) px is measured within 0.05 px") {
  for (unsigned seed : {1u, 7u, 42u}) {
    const cv::Mat source = textured_source(seed);
    const auto shift = tinct::estimate_shift(crop(source), shifted_crop(source, 1.3, -0.7), 128, 9);
    INFO("seed " << seed << ": dx " << shift.dx << " dy " << shift.dy << " error "
                 << error(shift, 1.3, -0.7));
    CHECK(shift.windows_used == 9);
    CHECK(std::fabs(shift.dx - 1.3) < 0.05);
    CHECK(std::fabs(shift.dy + 0.7) < 0.05);
  }
}

TEST_CASE("shift: an unshifted pair measures under 0.1 px") {
  const cv::Mat image = crop(textured_source(11));
  const auto shift = tinct::estimate_shift(image, image.clone(), 128, 9);
  INFO("dx " << shift.dx << " dy " << shift.dy);
  CHECK(shift.windows_used == 9);
  CHECK(shift.magnitude() < 0.1);
}

TEST_CASE("shift: whole-pixel shifts have the documented sign") {
  const cv::Mat source = textured_source(3);
  const auto shift = tinct::estimate_shift(crop(source), shifted_crop(source, -3, 5), 128, 4);
  INFO("dx " << shift.dx << " dy " << shift.dy);
  CHECK(shift.windows_used == 4);
  CHECK_THAT(shift.dx, Catch::Matchers::WithinAbs(-3.0, 0.05));
  CHECK_THAT(shift.dy, Catch::Matchers::WithinAbs(5.0, 0.05));
  CHECK_THAT(shift.magnitude(), Catch::Matchers::WithinAbs(std::sqrt(34.0), 0.05));
}

TEST_CASE("shift: NaN holes in both images (about 5 % each) still measure within 0.15 px") {
  const cv::Mat source = textured_source(7);
  cv::Mat reference = crop(source), moving = shifted_crop(source, 1.3, -0.7);
  punch_holes(reference, 3, 30, 12);
  punch_holes(moving, 4, 30, 12);
  const auto shift = tinct::estimate_shift(reference, moving, 128, 9);
  INFO("dx " << shift.dx << " dy " << shift.dy << " error " << error(shift, 1.3, -0.7));
  CHECK(shift.windows_used == 9);
  CHECK(error(shift, 1.3, -0.7) < 0.15);
}

TEST_CASE("shift: mostly invalid or flat windows are ignored") {
  const cv::Mat source = textured_source(5);
  cv::Mat reference = crop(source), moving = shifted_crop(source, 1.3, -0.7);
  const double nan = std::numeric_limits<double>::quiet_NaN();
  reference(cv::Rect(0, 0, kSize, 200)).setTo(nan);      // top row of windows: invalid
  moving(cv::Rect(0, kSize - 160, 160, 160)).setTo(20);  // bottom-left window: flat
  const auto shift = tinct::estimate_shift(reference, moving, 128, 9);
  INFO("dx " << shift.dx << " dy " << shift.dy);
  CHECK(shift.windows_used == 5);
  CHECK(error(shift, 1.3, -0.7) < 0.15);

  const cv::Mat flat(kSize, kSize, CV_32F, cv::Scalar(42));
  CHECK(tinct::estimate_shift(flat, flat.clone(), 128, 9).windows_used == 0);
}

TEST_CASE("shift: an image smaller than the window uses one power-of-two window") {
  const cv::Mat source = textured_source(9);
  const cv::Rect small(100, 100, 100, 90);  // 64x64 fits
  const cv::Mat reference = crop(source)(small).clone();
  const cv::Mat moving = shifted_crop(source, 1.3, -0.7)(small).clone();
  const auto shift = tinct::estimate_shift(reference, moving, 128, 9);
  INFO("dx " << shift.dx << " dy " << shift.dy);
  CHECK(shift.windows_used == 1);
  CHECK(error(shift, 1.3, -0.7) < 0.15);
  const cv::Mat tiny = reference(cv::Rect(0, 0, 12, 12)).clone();
  CHECK(tinct::estimate_shift(tiny, tiny.clone(), 128, 9).windows_used == 0);
}

TEST_CASE("shift: wrong image types, sizes and arguments are usage errors") {
  const cv::Mat image(64, 64, CV_32F, cv::Scalar(1));
  CHECK_THROWS_AS(tinct::estimate_shift(image, cv::Mat(64, 64, CV_8U), 32, 1), tinct::Error);
  CHECK_THROWS_AS(tinct::estimate_shift(image, cv::Mat(32, 64, CV_32F), 32, 1), tinct::Error);
  CHECK_THROWS_AS(tinct::estimate_shift(image, image, 8, 1), tinct::Error);
  CHECK_THROWS_AS(tinct::estimate_shift(image, image, 32, 0), tinct::Error);
}
