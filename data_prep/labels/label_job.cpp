#include "labels/label_job.hpp"

#include <algorithm>
#include <cmath>
#include <map>
#include <vector>

#include "chips/chip_plan.hpp"
#include "chips/band_storage.hpp"
#include "chips/store_writer.hpp"
#include "labels/class_list_check.hpp"
#include "labels/label_drops.hpp"
#include "labels/label_matcher.hpp"
#include "labels/label_raster.hpp"
#include "labels/label_reader.hpp"
#include "labels/polygon_sampler.hpp"
#include "raster/raster.hpp"
#include "util/atomic_file.hpp"
#include "util/error.hpp"
#include "util/log.hpp"
#include "util/progress.hpp"
#include "util/version_info.hpp"

namespace tinct {
namespace {

LabelSet read_labels(const LabelConfig& config, std::vector<std::string>& classes) {
  const LabelSourceSettings& s = config.labels;
  LabelSet set = s.raster.empty() ? read_label_source(s) : read_label_raster(s, config.chips.size, config.resolution);
  require_listed_classes(set, s);
  const std::vector<std::string> listed = s.classes.empty() && !s.raster.empty() ? raster_class_names(s) : s.classes;
  classes = select_classes(set, listed);
  sample_polygons(set, s.polygon_chips, config.chips.seed);
  return set;
}

StoreScene describe(const SceneSpec& spec, const TargetGrid& grid) {
  StoreScene entry;
  entry.id = spec.id;
  entry.path = spec.bands.front().file.string();
  entry.date = spec.date;
  entry.crs = grid.crs_wkt;
  entry.notes["grid_width"] = std::to_string(grid.width);
  entry.notes["grid_height"] = std::to_string(grid.height);
  return entry;
}

std::string shared_crs(const std::vector<StoreScene>& scenes) {
  for (const auto& scene : scenes) {
    if (!same_crs(scene.crs, scenes.front().crs)) return "";
  }
  return scenes.empty() ? "" : scenes.front().crs;
}

void log_summary(const std::vector<std::string>& classes, const std::map<std::string, std::int64_t>& kept,
                 const std::vector<LabelDrop>& drops) {
  std::map<std::string, std::int64_t> dropped;
  for (const auto& drop : drops) ++dropped[drop.class_name];
  std::vector<std::string> names = classes;
  for (const auto& [name, count] : dropped) {
    if (std::find(names.begin(), names.end(), name) == names.end()) names.push_back(name);
  }
  for (const auto& name : names) {
    const auto k = kept.count(name) ? kept.at(name) : 0;
    const auto d = dropped.count(name) ? dropped.at(name) : 0;
    log::info("class " + name + ": " + std::to_string(k) + " kept, " + std::to_string(d) + " dropped");
    const bool listed = std::find(classes.begin(), classes.end(), name) != classes.end();
    if (listed && k == 0) log::warning("class " + name + " has no chip in the store");
  }
  log::info("dropped: " + describe_counts(count_reasons(drops)));
}

}  // namespace

LabelSummary run_label_job(const LabelConfig& config, const LabelJobOptions& options) {
  std::vector<const SceneSpec*> scenes;
  for (const SceneSpec& scene : config.scenes) scenes.push_back(&scene);
  const StorageType storage = storage_for_inputs(scenes, config.inputs);
  const StoreLayout layout =
      chip_store_layout(StoreKind::labels, config.chips.size, config.inputs, storage, config.sensor);
  StoreWriter writer(options.output, layout, options.replace);
  std::vector<std::string> classes;
  LabelSet set = read_labels(config, classes);
  std::vector<LabelDrop> drops = std::move(set.drops);

  LabelMatcher matcher(config, set.crs);
  const int size = config.chips.size;
  std::vector<bool> used(config.scenes.size(), false);
  std::map<std::string, std::int64_t> kept;
  std::vector<std::uint16_t> u16;
  std::vector<float> f32;
  Progress progress("label", static_cast<std::int64_t>(set.labels.size()), "labels");
  std::int64_t seen = 0;
  for (const LabelRecord& label : set.labels) {
    progress.update(++seen);
    const LabelMatch match = matcher.match(label);
    if (!match.matched) {
      drops.push_back(match.drop);
      continue;
    }
    const SceneSpec& spec = config.scenes[match.choice.scene];
    const TargetGrid& grid = matcher.grid(match.choice.scene);
    ChipRecord record;
    record.index = writer.chip_count();
    record.scene = spec.id;
    record.col = match.choice.chip.col;
    record.row = match.choice.chip.row;
    record.x = grid.geotransform[0] + (record.col + size / 2.0) * grid.geotransform[1];
    record.y = grid.geotransform[3] + (record.row + size / 2.0) * grid.geotransform[5];
    record.date = spec.date;
    record.valid_fraction = match.valid_fraction;
    record.block = block_of(record.x, record.y, config.chips.block_size);
    record.label = label.class_name;
    record.group = label.group;
    record.source_id = label.id;
    to_stored_values(matcher.values(), matcher.valid(), storage, u16, f32);
    const void* bands = storage == StorageType::uint16 ? static_cast<const void*>(u16.data()) : f32.data();
    writer.add(record, bands, nullptr, matcher.valid().data());
    used[match.choice.scene] = true;
    ++kept[label.class_name];
  }
  progress.finish();

  const auto report = drop_report_path(options.output);
  write_file_atomic(report, drop_report_csv(drops));
  log_summary(classes, kept, drops);
  LabelSummary summary;
  summary.kept = writer.chip_count();
  summary.dropped = static_cast<std::int64_t>(drops.size());
  summary.labels = summary.kept + summary.dropped;
  if (summary.kept == 0) {
    fail_runtime("no label gave a chip: of " + std::to_string(summary.labels) + " labels, " +
                 describe_counts(count_reasons(drops)) + "; the reasons per label are in " + report.string() +
                 ". Check the labels' CRS and dates against the scenes, match.max_days and chips.min_valid");
  }

  StoreManifest manifest;
  for (std::size_t s = 0; s < config.scenes.size(); ++s) {
    if (used[s]) manifest.scenes.push_back(describe(config.scenes[s], matcher.grid(s)));
  }
  manifest.kind = StoreKind::labels;
  manifest.chip_size = size;
  manifest.bands = store_bands(config.inputs, storage, config.sensor);
  manifest.colour_encoding = ColourEncoding::none;
  manifest.crs = shared_crs(manifest.scenes);
  manifest.pixel_size = config.resolution;
  manifest.classes = classes;
  manifest.config_hash = options.config_hash;
  manifest.tinct_version = tinct_version();
  writer.finish(manifest);
  log::info("label: wrote " + std::to_string(summary.kept) + " chips to " + options.output.string() + ", " +
            std::to_string(summary.dropped) + " labels dropped (see " + report.string() + ")");
  return summary;
}

}  // namespace tinct
