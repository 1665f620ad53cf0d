#include "pretrain/colour_preview.hpp"

#include <torch/torch.h>

#include <opencv2/imgcodecs.hpp>
#include <opencv2/imgproc.hpp>

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <limits>
#include <string>
#include <utility>
#include <vector>

#include "colour/srgb_lab.hpp"
#include "util/atomic_file.hpp"
#include "util/error.hpp"
#include "util/running_stats.hpp"

namespace tinct {
namespace {

constexpr int kGap = 4;            // pixels between tiles, after enlarging
constexpr int kMinTile = 192;      // chips are enlarged (nearest neighbour) to at least this
constexpr int kHeader = 52;        // pixels above the tiles: caption and column labels
constexpr std::size_t kMaxCandidates = 1024;  // chips ranked for the preview, evenly spaced
const auto kFont = cv::FONT_HERSHEY_SIMPLEX;
constexpr double kFontScale = 0.5;

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

// A chip's colour in four numbers (code units): mean L, a, b and the spread, sqrt
// of the summed variances of L, a and b over valid pixels. Empty when fewer than
// half the pixels are valid.
std::vector<double> colour_features(const StoreReader& store, std::int64_t chip) {
  const int size = store.chip_size();
  const std::size_t area = static_cast<std::size_t>(size) * size;
  const std::uint8_t* colour = store.colour(chip);
  const std::uint8_t* valid = store.valid(chip);
  RunningStats channels[3];
  for (std::size_t i = 0; i < area; ++i) {
    if (!valid[i]) continue;
    for (int c = 0; c < 3; ++c) channels[c].add(colour[c * area + i]);
  }
  store.release(chip);
  if (channels[0].count() * 2 < static_cast<std::int64_t>(area)) return {};
  double variance = 0;
  for (const auto& channel : channels) variance += channel.population_std() * channel.population_std();
  return {channels[0].mean(), channels[1].mean(), channels[2].mean(), std::sqrt(variance)};
}

double squared_distance(const std::vector<double>& a, const std::vector<double>& b) {
  double sum = 0;
  for (std::size_t i = 0; i < a.size(); ++i) sum += (a[i] - b[i]) * (a[i] - b[i]);
  return sum;
}

void put_text(cv::Mat& image, const std::string& text, int centre_x, int baseline_y) {
  int base = 0;
  const cv::Size size = cv::getTextSize(text, kFont, kFontScale, 1, &base);
  cv::putText(image, text, cv::Point(centre_x - size.width / 2, baseline_y), kFont, kFontScale,
              cv::Scalar(0, 0, 0), 1, cv::LINE_AA);
}

std::string caption_text(const PreviewCaption& caption) {
  char text[160];
  std::snprintf(text, sizeof(text), "step %lld   validation delta E %.2f (mean colour %.2f)",
                static_cast<long long>(caption.step), caption.delta_e, caption.baseline_delta_e);
  return text;
}

}  // namespace

std::vector<ChipRef> preview_chips(const ChipCollection& chips, const std::vector<ChipRef>& candidates, int count) {
  if (count <= 0 || candidates.empty()) return {};
  const std::size_t step = std::max<std::size_t>(1, candidates.size() / kMaxCandidates);
  std::vector<std::size_t> index;  // into candidates
  std::vector<std::vector<double>> features;
  for (std::size_t i = 0; i < candidates.size(); i += step) {
    auto f = colour_features(chips.store(candidates[i].store), candidates[i].chip);
    if (f.empty()) continue;
    index.push_back(i);
    features.push_back(std::move(f));
  }
  if (index.empty()) return {candidates.front()};
  // Start from the chip of median spread, then repeatedly add the chip farthest from
  // all chosen ones: near-identical chips (flat water) take at most one tile.
  std::vector<std::size_t> by_spread(index.size());
  for (std::size_t k = 0; k < by_spread.size(); ++k) by_spread[k] = k;
  std::stable_sort(by_spread.begin(), by_spread.end(),
                   [&](std::size_t a, std::size_t b) { return features[a][3] < features[b][3]; });
  std::vector<std::size_t> chosen{by_spread[by_spread.size() / 2]};
  std::vector<double> nearest(index.size(), std::numeric_limits<double>::max());
  while (chosen.size() < std::min<std::size_t>(static_cast<std::size_t>(count), index.size())) {
    std::size_t farthest = 0;
    for (std::size_t k = 0; k < index.size(); ++k) {
      nearest[k] = std::min(nearest[k], squared_distance(features[k], features[chosen.back()]));
      if (nearest[k] > nearest[farthest]) farthest = k;
    }
    if (nearest[farthest] == 0) break;  // only copies of chosen chips are left
    chosen.push_back(farthest);
  }
  std::vector<ChipRef> result;
  for (std::size_t k : chosen) result.push_back(candidates[index[k]]);
  return result;
}

void write_colour_preview(const std::filesystem::path& file, const at::Tensor& truth_codes,
                          const at::Tensor& predicted_scaled, const PreviewCaption& caption) {
  const int count = static_cast<int>(truth_codes.size(0));
  const int size = static_cast<int>(truth_codes.size(2));
  // Codes -> Lab units: L = code * 100/255, a = code - 128, b = code - 128.
  const torch::Tensor truth = (truth_codes.to(torch::kFloat32) -
                               torch::tensor({0.0f, 128.0f, 128.0f}).view({1, 3, 1, 1})) *
                              torch::tensor({100.0f / 255.0f, 1.0f, 1.0f}).view({1, 3, 1, 1});
  const torch::Tensor predicted =
      (predicted_scaled.to(torch::kFloat32) * torch::tensor({100.0f, 128.0f, 128.0f}).view({1, 3, 1, 1})).contiguous();
  const torch::Tensor t = truth.contiguous();
  // Tiles at chip resolution, side by side, then enlarged as a whole.
  cv::Mat tiles(count * size, 2 * size, CV_8UC3);
  const std::size_t area = static_cast<std::size_t>(size) * size;
  for (int n = 0; n < count; ++n) {
    const float* tp = t[n].data_ptr<float>();
    const float* pp = predicted[n].data_ptr<float>();
    paint(tiles, 0, n * size, tp, tp + area, tp + 2 * area, size);
    paint(tiles, size, n * size, pp, pp + area, pp + 2 * area, size);
  }
  const int scale = std::max(1, (kMinTile + size - 1) / size);
  const int tile = size * scale;
  cv::resize(tiles, tiles, cv::Size(), scale, scale, cv::INTER_NEAREST);

  const std::string text = caption_text(caption);
  int base = 0;
  const int text_width = cv::getTextSize(text, kFont, kFontScale, 1, &base).width;
  const int width = std::max(2 * tile + 3 * kGap, text_width + 2 * kGap);
  const int left = (width - (2 * tile + kGap)) / 2;
  cv::Mat image(kHeader + count * (tile + kGap), width, CV_8UC3, cv::Scalar(255, 255, 255));
  put_text(image, text, width / 2, 20);
  put_text(image, "true colour", left + tile / 2, kHeader - 10);
  put_text(image, "predicted", left + tile + kGap + tile / 2, kHeader - 10);
  for (int n = 0; n < count; ++n) {
    const int y = kHeader + n * (tile + kGap);
    tiles(cv::Rect(0, n * tile, tile, tile)).copyTo(image(cv::Rect(left, y, tile, tile)));
    tiles(cv::Rect(tile, n * tile, tile, tile)).copyTo(image(cv::Rect(left + tile + kGap, y, tile, tile)));
  }
  std::vector<uchar> png;
  if (!cv::imencode(".png", image, png)) fail_runtime("cannot encode preview " + file.string());
  write_file_atomic(file, std::string(png.begin(), png.end()));
}

}  // namespace tinct
