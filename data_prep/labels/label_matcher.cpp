#include "labels/label_matcher.hpp"

#include <algorithm>
#include <cmath>
#include <cstdio>

#include "raster/scene_date.hpp"
#include "util/log.hpp"

namespace tinct {
namespace {

constexpr std::size_t kOpenScenes = 4;  // scenes held open between labels
constexpr std::size_t kDetailScenes = 3; // scenes named in a drop's detail

std::string format(const char* pattern, double a, double b) {
  char text[160];
  std::snprintf(text, sizeof(text), pattern, a, b);
  return text;
}

}  // namespace

std::optional<ChipPosition> chip_around(const TargetGrid& grid, double x, double y, int size) {
  const double col = std::floor((x - grid.geotransform[0]) / grid.geotransform[1]);
  const double row = std::floor((y - grid.geotransform[3]) / grid.geotransform[5]);
  if (!std::isfinite(col) || !std::isfinite(row)) return std::nullopt;
  const double left = col - size / 2, top = row - size / 2;
  if (left < 0 || top < 0 || left + size > grid.width || top + size > grid.height) return std::nullopt;
  return ChipPosition{static_cast<int>(left), static_cast<int>(top)};
}

std::vector<SceneChoice> order_candidates(std::vector<SceneChoice> covering, long max_days) {
  std::vector<SceneChoice> kept;
  for (const auto& choice : covering) {
    if (max_days < 0 || choice.days_apart <= max_days) kept.push_back(choice);
  }
  std::stable_sort(kept.begin(), kept.end(), [](const SceneChoice& a, const SceneChoice& b) {
    return a.days_apart != b.days_apart ? a.days_apart < b.days_apart : a.scene < b.scene;
  });
  return kept;
}

LabelMatcher::LabelMatcher(const LabelConfig& config, const std::string& label_crs) : config_(config) {
  std::vector<std::string> crs_of_transform;
  for (std::size_t i = 0; i < config.scenes.size(); ++i) {
    const Scene& scene = open_scene(i);
    for (const auto& note : scene.alignment_notes()) log::info("scene " + config.scenes[i].id + ": aligning " + note);
    grids_.push_back(scene.grid());
    scene_days_.push_back(days_since_epoch(config.scenes[i].date));
    std::size_t t = 0;
    while (t < crs_of_transform.size() && !same_crs(crs_of_transform[t], scene.grid().crs_wkt)) ++t;
    if (t == crs_of_transform.size()) {
      crs_of_transform.push_back(scene.grid().crs_wkt);
      transforms_.push_back(std::make_unique<PointTransform>(label_crs, scene.grid().crs_wkt, "labels' CRS"));
    }
    to_scene_.push_back(transforms_[t].get());
  }
}

LabelMatcher::~LabelMatcher() = default;

const Scene& LabelMatcher::open_scene(std::size_t scene) {
  recent_.erase(std::remove(recent_.begin(), recent_.end(), scene), recent_.end());
  recent_.push_back(scene);
  auto found = open_.find(scene);
  if (found != open_.end()) return *found->second;
  if (open_.size() >= kOpenScenes) {
    open_.erase(recent_.front());
    recent_.erase(recent_.begin());
  }
  auto opened = std::make_unique<Scene>(config_.scenes[scene], config_.sensor, config_.inputs, config_.resolution,
                                        config_.align);
  return *open_.emplace(scene, std::move(opened)).first->second;
}

LabelMatcher::ChipCheck LabelMatcher::read_chip(std::size_t scene, const ChipPosition& chip) {
  const int size = config_.chips.size;
  const std::size_t n = static_cast<std::size_t>(size) * size;
  values_.resize(config_.inputs.size() * n);
  open_scene(scene).read(chip.col, chip.row, size, size, values_.data());
  valid_.assign(n, 1);
  for (std::size_t k = 0; k < config_.inputs.size(); ++k) {
    for (std::size_t i = 0; i < n; ++i) {
      if (!std::isfinite(values_[k * n + i])) valid_[i] = 0;
    }
  }
  std::size_t count = 0;
  for (std::uint8_t v : valid_) count += v;
  const std::size_t centre = static_cast<std::size_t>(size / 2) * size + size / 2;
  return {valid_[centre] == 1, static_cast<double>(count) / static_cast<double>(n)};
}

LabelMatch LabelMatcher::match(const LabelRecord& label) {
  LabelMatch result;
  result.drop.id = label.id;
  result.drop.class_name = label.class_name;
  const bool dated = !label.date.empty();
  const long label_day = dated ? days_since_epoch(label.date) : 0;
  const std::string sample = label.sample > 0 ? "polygon sample " + std::to_string(label.sample) + ": " : "";

  std::vector<SceneChoice> covering;
  for (std::size_t s = 0; s < grids_.size(); ++s) {
    double x = label.x, y = label.y;
    if (!to_scene_[s]->apply(x, y)) continue;
    const auto chip = chip_around(grids_[s], x, y, config_.chips.size);
    if (!chip) continue;
    covering.push_back({s, dated ? std::labs(label_day - scene_days_[s]) : 0, *chip});
  }
  if (covering.empty()) {
    result.drop.reason = DropReason::outside;
    result.drop.detail = sample + format("(%.6f, %.6f)", label.x, label.y) + " in the labels' CRS: no scene grid "
                         "holds a full " + std::to_string(config_.chips.size) + "-pixel chip around it";
    return result;
  }
  const std::vector<SceneChoice> ordered = order_candidates(covering, dated ? config_.match.max_days : -1);
  if (ordered.empty()) {
    const SceneChoice nearest = order_candidates(covering, -1).front();
    const SceneSpec& spec = config_.scenes[nearest.scene];
    result.drop.reason = DropReason::no_scene_in_time;
    result.drop.detail = sample + "label date " + label.date + "; the nearest covering scene, " + spec.id + " (" +
                         spec.date + "), is " + std::to_string(nearest.days_apart) +
                         " days away (match.max_days " + std::to_string(config_.match.max_days) + ")";
    return result;
  }

  std::string tried;
  for (std::size_t k = 0; k < ordered.size(); ++k) {
    const SceneChoice& choice = ordered[k];
    const ChipCheck check = read_chip(choice.scene, choice.chip);
    const bool centre_ok = check.centre_valid || !config_.chips.centre_valid;
    if (centre_ok && check.valid_fraction >= config_.chips.min_valid) {
      result.matched = true;
      result.choice = choice;
      result.valid_fraction = check.valid_fraction;
      return result;
    }
    if (k == 0) result.drop.reason = centre_ok ? DropReason::too_few_valid : DropReason::masked;
    if (k < kDetailScenes) {
      const std::string scene = config_.scenes[choice.scene].id;
      tried += (tried.empty() ? "" : "; ") + scene + ": " +
               (centre_ok ? format("%.3f valid < chips.min_valid %.3f", check.valid_fraction, config_.chips.min_valid)
                          : std::string("the label's pixel is masked or nodata"));
    } else if (k == kDetailScenes) {
      tried += "; and " + std::to_string(ordered.size() - kDetailScenes) + " more";
    }
  }
  result.drop.detail = sample + tried;
  return result;
}

}  // namespace tinct
