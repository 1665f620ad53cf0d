#include "labels/label_raster.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>
#include <map>

#include "raster/crs.hpp"
#include "raster/raster.hpp"
#include "util/error.hpp"
#include "util/log.hpp"

namespace tinct {
namespace {

std::string value_text(double value) {
  char text[64];
  if (value == std::floor(value) && std::fabs(value) < 1e15) {
    std::snprintf(text, sizeof(text), "%.0f", value);
  } else {
    std::snprintf(text, sizeof(text), "%.17g", value);
  }
  return text;
}

std::string class_of(double value, const LabelSourceSettings& s) {
  for (const auto& [code, name] : s.raster_classes) {
    if (code == value) return name;
  }
  return value_text(value);
}

void require_projected(const Raster& raster) {
  const std::string file = raster.path().string();
  const std::string wkt = raster.crs_wkt();
  if (wkt.empty()) {
    fail_usage(file + ": the label raster has no CRS; assign one (gdal_edit.py -a_srs EPSG:XXXX " + file + ")");
  }
  const GeoTransform gt = raster.geotransform();
  if (crs_is_geographic(wkt) || gt[2] != 0 || gt[4] != 0 || gt[5] >= 0) {
    fail_usage(file + ": the label raster must be north-up in a projected CRS so its pixels compare to the "
               "grid's; warp it onto a scene's CRS first (gdalwarp -t_srs EPSG:XXXX -r near)");
  }
}

int footprint_pixels(double chip_metres, double pixel, const std::string& file) {
  const int pixels = static_cast<int>(std::lround(chip_metres / pixel));
  if (pixels < 1) fail_usage(file + ": label raster pixels are larger than a whole chip; use a finer raster");
  return pixels;
}

struct WindowClass {
  bool labelled = false;  // any class value in the window (majority) or at its centre
  double value = 0;
  double share = 0;       // majority: the value's share of the window
};

WindowClass classify(const std::vector<double>& strip, int width, int col, int sx, int sy,
                     const std::optional<double>& nodata, RasterRule rule) {
  const auto is_class = [&](double v) { return std::isfinite(v) && !(nodata && v == *nodata); };
  WindowClass result;
  if (rule == RasterRule::centre) {
    const double v = strip[static_cast<std::size_t>(sy / 2) * width + col + sx / 2];
    if (is_class(v)) result = {true, v, 1.0};
    return result;
  }
  std::map<double, long> counts;
  for (int r = 0; r < sy; ++r) {
    for (int c = 0; c < sx; ++c) {
      const double v = strip[static_cast<std::size_t>(r) * width + col + c];
      if (is_class(v)) ++counts[v];
    }
  }
  for (const auto& [value, count] : counts) {  // ascending: ties keep the smaller value
    const double share = static_cast<double>(count) / (static_cast<double>(sx) * sy);
    if (!result.labelled || share > result.share) result = {true, value, share};
  }
  return result;
}

}  // namespace

std::vector<std::string> raster_class_names(const LabelSourceSettings& settings) {
  std::vector<std::string> names;
  for (const auto& entry : settings.raster_classes) {
    if (std::find(names.begin(), names.end(), entry.second) == names.end()) names.push_back(entry.second);
  }
  return names;
}

LabelSet read_label_raster(const LabelSourceSettings& s, int chip_size, double resolution) {
  const Raster raster = Raster::open(s.raster);
  const std::string file = s.raster.string();
  if (s.raster_band > raster.band_count()) {
    fail_usage(file + ": labels.raster_band " + std::to_string(s.raster_band) + " but the raster has " +
               std::to_string(raster.band_count()) + " band(s)");
  }
  require_projected(raster);
  const GeoTransform gt = raster.geotransform();
  const int sx = footprint_pixels(chip_size * resolution, gt[1], file);
  const int sy = footprint_pixels(chip_size * resolution, -gt[5], file);
  const std::optional<double> nodata = raster.band(s.raster_band).nodata;
  const int width = raster.width();

  LabelSet set;
  set.crs = raster.crs_wkt();
  std::vector<double> strip(static_cast<std::size_t>(width) * sy);
  long unlabelled = 0;
  for (int row = 0; row + sy <= raster.height(); row += sy) {
    raster.read(s.raster_band, 0, row, width, sy, strip.data());
    for (int col = 0; col + sx <= width; col += sx) {
      const WindowClass window = classify(strip, width, col, sx, sy, nodata, s.raster_rule);
      if (!window.labelled) {
        ++unlabelled;
        continue;
      }
      LabelRecord label;
      const int centre_col = col + sx / 2, centre_row = row + sy / 2;
      label.id = "c" + std::to_string(centre_col) + "r" + std::to_string(centre_row);
      label.where = file + " pixel col " + std::to_string(centre_col) + " row " + std::to_string(centre_row);
      label.class_name = class_of(window.value, s);
      label.date = s.raster_date;
      label.group = label.id;
      label.x = gt[0] + (centre_col + 0.5) * gt[1];
      label.y = gt[3] + (centre_row + 0.5) * gt[5];
      if (window.share < s.min_share) {
        char detail[160];
        std::snprintf(detail, sizeof(detail), "value %s covers %.3f of the chip (labels.min_share %.3f)",
                      value_text(window.value).c_str(), window.share, s.min_share);
        set.drops.push_back({label.id, label.class_name, DropReason::no_majority, detail});
        continue;
      }
      set.labels.push_back(std::move(label));
    }
  }
  log::info(file + ": " + std::to_string(set.labels.size() + set.drops.size()) + " labelled windows of " +
            std::to_string(sx) + " x " + std::to_string(sy) + " pixels, " + std::to_string(unlabelled) +
            " without a class value");
  if (set.labels.empty() && set.drops.empty()) {
    fail_runtime(file + ": no window of the label raster holds a class value (all nodata?)");
  }
  return set;
}

}  // namespace tinct
