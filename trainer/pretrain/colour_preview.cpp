#include "pretrain/colour_preview.hpp"

#include <torch/torch.h>

#include <opencv2/imgcodecs.hpp>
#include <opencv2/imgproc.hpp>

#include <algorithm>
#include <string>
#include <vector>

#include "colour/srgb_lab.hpp"
#include "util/atomic_file.hpp"
#include "util/error.hpp"

namespace tinct {
namespace {

constexpr int kGap = 2;         // pixels between tiles
constexpr int kMinTile = 96;    // small chips are enlarged (nearest neighbour) to at least this

// Paints one Lab chip (L, a, b planes in Lab units) into the BGR image at (x, y).
void paint(cv::Mat& image, int x, int y, const float* L, const float* a, const float* b, int size) {
  for (int row = 0; row < size; ++row) {
    for (int col = 0; col < size; ++col) {
      const int i = row * size + col;
      double r = 0, g = 0, bl = 0;
      lab_to_srgb(Lab{L[i], a[i], b[i]}, r, g, bl);
      image.at<cv::Vec3b>(y + row, x + col) =
          cv::Vec3b(static_cast<uchar>(std::lround(bl * 255)), static_cast<uchar>(std::lround(g * 255)),
                    static_cast<uchar>(std::lround(r * 255)));
    }
  }
}

}  // namespace

void write_colour_preview(const std::filesystem::path& file, const at::Tensor& truth_codes,
                          const at::Tensor& predicted_scaled) {
  const int count = static_cast<int>(truth_codes.size(0));
  const int size = static_cast<int>(truth_codes.size(2));
  // Codes -> Lab units: L = code * 100/255, a = code - 128, b = code - 128.
  const torch::Tensor truth = (truth_codes.to(torch::kFloat32) -
                               torch::tensor({0.0f, 128.0f, 128.0f}).view({1, 3, 1, 1})) *
                              torch::tensor({100.0f / 255.0f, 1.0f, 1.0f}).view({1, 3, 1, 1});
  const torch::Tensor predicted =
      (predicted_scaled.to(torch::kFloat32) * torch::tensor({100.0f, 128.0f, 128.0f}).view({1, 3, 1, 1})).contiguous();
  const torch::Tensor t = truth.contiguous();
  cv::Mat image(count * (size + kGap) + kGap, 2 * size + 3 * kGap, CV_8UC3, cv::Scalar(255, 255, 255));
  const std::size_t area = static_cast<std::size_t>(size) * size;
  for (int n = 0; n < count; ++n) {
    const float* tp = t[n].data_ptr<float>();
    const float* pp = predicted[n].data_ptr<float>();
    const int y = kGap + n * (size + kGap);
    paint(image, kGap, y, tp, tp + area, tp + 2 * area, size);
    paint(image, 2 * kGap + size, y, pp, pp + area, pp + 2 * area, size);
  }
  const int scale = std::max(1, kMinTile / size);
  if (scale > 1) cv::resize(image, image, cv::Size(), scale, scale, cv::INTER_NEAREST);
  std::vector<uchar> png;
  if (!cv::imencode(".png", image, png)) fail_runtime("cannot encode preview " + file.string());
  write_file_atomic(file, std::string(png.begin(), png.end()));
}

}  // namespace tinct
