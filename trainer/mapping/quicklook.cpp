#include "mapping/quicklook.hpp"

#include <opencv2/imgcodecs.hpp>
#include <opencv2/imgproc.hpp>

#include <cmath>

#include "mapping/class_palette.hpp"
#include "mapping/map_caution.hpp"
#include "util/atomic_file.hpp"
#include "util/error.hpp"

namespace tinct {
namespace {

constexpr int kFont = cv::FONT_HERSHEY_SIMPLEX;
constexpr double kFontScale = 0.45;
const cv::Scalar kInk(30, 30, 30);

cv::Scalar bgr(const ColourEntry& c) { return cv::Scalar(c.blue, c.green, c.red); }

void text(cv::Mat& image, const std::string& s, int x, int y, double scale = kFontScale) {
  cv::putText(image, s, {x, y}, kFont, scale, kInk, 1, cv::LINE_AA);
}

// Words into lines of at most `width` pixels.
std::vector<std::string> wrap(const std::string& s, int width) {
  std::vector<std::string> lines;
  std::string line, word;
  const auto fits = [&](const std::string& t) {
    int base = 0;
    return cv::getTextSize(t, kFont, kFontScale, 1, &base).width <= width;
  };
  for (std::size_t i = 0; i <= s.size(); ++i) {
    if (i < s.size() && s[i] != ' ') {
      word += s[i];
      continue;
    }
    const std::string candidate = line.empty() ? word : line + " " + word;
    if (fits(candidate) || line.empty()) line = candidate;
    else {
      lines.push_back(line);
      line = word;
    }
    word.clear();
  }
  if (!line.empty()) lines.push_back(line);
  return lines;
}

void hatch(cv::Mat& image, const cv::Rect& r) {
  cv::Mat region = image(r);
  for (int y = 0; y < region.rows; ++y) {
    for (int x = 0; x < region.cols; ++x) {
      if (((r.x + x) + (r.y + y)) % 6 < 2) region.at<cv::Vec3b>(y, x) = {90, 90, 90};
    }
  }
}

// 1, 2 or 5 times a power of ten, at most `limit`.
double nice_length(double limit) {
  const double power = std::pow(10.0, std::floor(std::log10(limit)));
  for (double m : {5.0, 2.0, 1.0}) {
    if (m * power <= limit) return m * power;
  }
  return power;
}

std::string length_text(double length, const std::string& units) {
  if (units == "m" && length >= 1000) return std::to_string(static_cast<long>(length / 1000)) + " km";
  char buffer[64];
  std::snprintf(buffer, sizeof buffer, "%g %s", length, units.c_str());
  return buffer;
}

}  // namespace

Quicklook::Quicklook(int columns, int rows, double cell_size, std::string units, std::vector<std::string> classes,
                     std::string title)
    : units_(std::move(units)), classes_(std::move(classes)), title_(std::move(title)) {
  step_ = std::max(1, (std::max(columns, rows) + kMaxCells - 1) / kMaxCells);
  columns_ = (columns + step_ - 1) / step_;
  rows_ = (rows + step_ - 1) / step_;
  cell_size_ = cell_size * step_;
  class_.assign(static_cast<std::size_t>(columns_) * rows_, kByteNodata);
  outside_.assign(class_.size(), 0);
}

void Quicklook::add_row(int row, const std::vector<CellValues>& cells) {
  if (row % step_ != 0) return;
  const std::size_t base = static_cast<std::size_t>(row / step_) * columns_;
  for (std::size_t c = 0; c < cells.size(); c += static_cast<std::size_t>(step_)) {
    if (!cells[c].valid) continue;
    class_[base + c / step_] = static_cast<std::uint8_t>(cells[c].predicted);
    outside_[base + c / step_] = cells[c].inside ? 0 : 1;
  }
}

void Quicklook::write(const std::filesystem::path& file) const {
  const int scale = std::max(1, 600 / std::max(columns_, rows_));
  const int map_w = columns_ * scale, map_h = rows_ * scale;
  const int margin = 16, legend_w = 230, title_h = 28;
  const int width = margin + map_w + margin + legend_w;
  const std::vector<std::string> footer = wrap(kMapCaution, width - 2 * margin);
  const int height = title_h + std::max(map_h, 220) + 50 + static_cast<int>(footer.size()) * 18 + margin;
  cv::Mat image(height, width, CV_8UC3, cv::Scalar(255, 255, 255));
  text(image, title_, margin, 20, 0.5);

  const std::vector<ColourEntry> colours = class_colours(static_cast<int>(classes_.size()));
  const int top = title_h;
  for (int r = 0; r < rows_; ++r) {
    for (int c = 0; c < columns_; ++c) {
      const std::uint8_t k = class_[static_cast<std::size_t>(r) * columns_ + c];
      const cv::Rect cell(margin + c * scale, top + r * scale, scale, scale);
      cv::rectangle(image, cell, bgr(k == kByteNodata ? kNodataColour : colours[k]), cv::FILLED);
      if (k != kByteNodata && outside_[static_cast<std::size_t>(r) * columns_ + c]) hatch(image, cell);
    }
  }
  cv::rectangle(image, cv::Rect(margin - 1, top - 1, map_w + 2, map_h + 2), kInk, 1);

  // Legend.
  int x = margin + map_w + margin, y = top + 14;
  text(image, "Most probable class", x, y);
  const auto swatch = [&](const cv::Scalar& colour, bool hatched, const std::string& label) {
    y += 22;
    const cv::Rect box(x, y - 12, 22, 14);
    cv::rectangle(image, box, colour, cv::FILLED);
    if (hatched) hatch(image, box);
    cv::rectangle(image, box, kInk, 1);
    text(image, label, x + 30, y);
  };
  for (std::size_t k = 0; k < classes_.size(); ++k) swatch(bgr(colours[k]), false, classes_[k]);
  swatch(bgr(kNodataColour), false, "no data (unknown)");
  swatch(cv::Scalar(255, 255, 255), true, "outside area of");
  text(image, "applicability (unknown)", x + 30, y + 16);

  // North arrow (grid north: the map is north-up).
  const cv::Point tip(x + 20, y + 50), base_l(x + 12, y + 78), base_r(x + 28, y + 78);
  std::vector<cv::Point> arrow{tip, base_r, {x + 20, y + 70}, base_l};
  cv::fillConvexPoly(image, arrow, kInk, cv::LINE_AA);
  text(image, "N", x + 15, y + 95);

  // Scale bar under the map.
  const double map_width_units = cell_size_ * columns_;
  const double length = nice_length(map_width_units / 3);
  const int bar = static_cast<int>(std::lround(length / map_width_units * map_w));
  const int bar_y = top + std::max(map_h, 220) + 18;
  cv::rectangle(image, cv::Rect(margin, bar_y, bar, 6), kInk, cv::FILLED);
  cv::rectangle(image, cv::Rect(margin + bar / 2, bar_y + 1, bar / 2 - 1, 4), cv::Scalar(255, 255, 255), cv::FILLED);
  text(image, length_text(length, units_), margin + bar + 8, bar_y + 8);

  int line_y = bar_y + 34;
  for (const auto& line : footer) {
    text(image, line, margin, line_y);
    line_y += 18;
  }
  std::vector<unsigned char> png;
  if (!cv::imencode(".png", image, png)) fail_runtime(file.string() + ": OpenCV could not encode the quicklook");
  write_file_atomic(file, std::string(png.begin(), png.end()));
}

}  // namespace tinct
