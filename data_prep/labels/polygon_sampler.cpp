#include "labels/polygon_sampler.hpp"

#include <random>

#include "raster/polygon_shape.hpp"
#include "util/error.hpp"
#include "util/log.hpp"

namespace tinct {
namespace {

constexpr int kTriesPerPoint = 1000;

std::vector<LabelRecord> sample_one(const LabelRecord& polygon, int count, std::mt19937_64& random) {
  const PolygonShape shape(polygon.polygon_wkt, polygon.where);
  const Envelope box = shape.envelope();
  std::uniform_real_distribution<double> x(box.min_x, box.max_x), y(box.min_y, box.max_y);
  std::vector<LabelRecord> samples;
  for (int tries = 0; tries < count * kTriesPerPoint && static_cast<int>(samples.size()) < count; ++tries) {
    const double px = x(random), py = y(random);
    if (!shape.contains(px, py)) continue;
    LabelRecord sample = polygon;
    sample.shape = LabelShape::point;
    sample.polygon_wkt.clear();
    sample.x = px;
    sample.y = py;
    sample.sample = static_cast<int>(samples.size()) + 1;
    samples.push_back(std::move(sample));
  }
  return samples;
}

}  // namespace

void sample_polygons(LabelSet& set, int count, std::uint64_t seed) {
  bool any = false;
  for (const auto& label : set.labels) any = any || label.shape == LabelShape::polygon;
  if (!any) return;
  if (!PolygonShape::available()) {
    fail_runtime("polygon labels need GDAL built with GEOS (for Within); this GDAL has none");
  }
  std::vector<LabelRecord> points;
  std::uint64_t polygon_number = 0;
  for (auto& label : set.labels) {
    if (label.shape != LabelShape::polygon) {
      points.push_back(std::move(label));
      continue;
    }
    std::mt19937_64 random(seed * 0x9E3779B97F4A7C15ULL + polygon_number++);
    std::vector<LabelRecord> samples = sample_one(label, count, random);
    if (samples.empty()) {
      set.drops.push_back({label.id, label.class_name, DropReason::no_point_in_polygon,
                           std::to_string(count * kTriesPerPoint) +
                               " seeded points in its bounding box all fell outside it (empty or sliver polygon?)"});
      continue;
    }
    if (static_cast<int>(samples.size()) < count) {
      log::warning(label.where + ": found " + std::to_string(samples.size()) + " of " + std::to_string(count) +
                   " points inside the polygon");
    }
    for (auto& sample : samples) points.push_back(std::move(sample));
  }
  set.labels = std::move(points);
}

}  // namespace tinct
