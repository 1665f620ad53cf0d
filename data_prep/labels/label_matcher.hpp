// Which scene gives a label its chip. A scene is a candidate when its grid holds
// a full chip centred on the label (the label's pixel at (size/2, size/2)) and,
// for a dated label, its date is within match.max_days. Candidates are tried by
// distance in days (undated labels: in config order; ties: config order) and the
// first whose chip passes (the label's pixel valid when chips.centre_valid, and
// at least chips.min_valid of the pixels valid: no nodata, not masked) is taken.
// Otherwise the label is dropped with the reason of the most-preferred failure.
#pragma once

#include <cstdint>
#include <map>
#include <memory>
#include <optional>
#include <string>
#include <vector>

#include "labels/label_config.hpp"
#include "labels/label_drops.hpp"
#include "labels/label_reader.hpp"
#include "raster/point_transform.hpp"
#include "raster/scene.hpp"
#include "raster/target_grid.hpp"

namespace tinct {

struct ChipPosition {
  int col = 0, row = 0;  // top-left pixel of the chip in the grid
};

// The chip of `size` pixels whose pixel (size/2, size/2) holds map point (x, y),
// if it lies wholly inside `grid`.
std::optional<ChipPosition> chip_around(const TargetGrid& grid, double x, double y, int size);

struct SceneChoice {
  std::size_t scene = 0;  // index into the config's scenes
  long days_apart = 0;    // 0 for undated labels
  ChipPosition chip;
};

// Candidates in the order they are tried: by days_apart, then by scene index;
// those beyond max_days are left out (`max_days` < 0: no limit).
std::vector<SceneChoice> order_candidates(std::vector<SceneChoice> covering, long max_days);

struct LabelMatch {
  bool matched = false;
  SceneChoice choice;
  double valid_fraction = 0;
  LabelDrop drop;  // when not matched
};

class LabelMatcher {
 public:
  // Opens each scene once to learn its grid (in config order).
  LabelMatcher(const LabelConfig& config, const std::string& label_crs);
  ~LabelMatcher();

  // On a match, values() and valid() hold the chip: inputs x size x size stored
  // values (NaN where invalid) and size x size validity.
  LabelMatch match(const LabelRecord& label);
  const std::vector<float>& values() const { return values_; }
  const std::vector<std::uint8_t>& valid() const { return valid_; }

  const TargetGrid& grid(std::size_t scene) const { return grids_[scene]; }

 private:
  struct ChipCheck {
    bool centre_valid = false;
    double valid_fraction = 0;
  };
  ChipCheck read_chip(std::size_t scene, const ChipPosition& chip);
  const Scene& open_scene(std::size_t scene);

  const LabelConfig& config_;
  std::vector<TargetGrid> grids_;
  std::vector<long> scene_days_;
  std::vector<const PointTransform*> to_scene_;  // per scene, into transforms_
  std::vector<std::unique_ptr<PointTransform>> transforms_;  // one per distinct scene CRS
  std::map<std::size_t, std::unique_ptr<Scene>> open_;  // a few scenes kept open
  std::vector<std::size_t> recent_;                     // open_ keys, least recent first
  std::vector<float> values_;
  std::vector<std::uint8_t> valid_;
};

}  // namespace tinct
