#include "labels/label_job.hpp"

#include <algorithm>
#include <cmath>
#include <map>
#include <vector>

#include "chips/store_builder.hpp"
#include "labels/class_list_check.hpp"
#include "labels/label_drops.hpp"
#include "labels/label_matcher.hpp"
#include "labels/label_raster.hpp"
#include "labels/label_reader.hpp"
#include "labels/polygon_sampler.hpp"
#include "util/atomic_file.hpp"
#include "util/error.hpp"
#include "util/log.hpp"
#include "util/log_capture.hpp"
#include "util/progress.hpp"

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
  log::start_capture();  // into the store's log.txt
  std::vector<const SceneSpec*> scenes;
  for (const SceneSpec& scene : config.scenes) scenes.push_back(&scene);
  StorePlan plan;
  plan.output = options.output;
  plan.replace = options.replace;
  plan.kind = StoreKind::labels;
  plan.chip_size = config.chips.size;
  plan.inputs = config.inputs;
  plan.pixel_size = config.resolution;
  plan.block_size = config.chips.block_size;
  plan.config_hash = options.config_hash;
  StoreBuilder store(plan, scenes, config.sensor);
  std::vector<std::string> classes;
  LabelSet set = read_labels(config, classes);
  std::vector<LabelDrop> drops = std::move(set.drops);

  LabelMatcher matcher(config, set.crs);
  std::vector<bool> used(config.scenes.size(), false);
  std::map<std::string, std::int64_t> kept;
  Progress progress("label", static_cast<std::int64_t>(set.labels.size()), "labels");
  std::int64_t seen = 0;
  for (const LabelRecord& label : set.labels) {
    progress.update(++seen);
    const LabelMatch match = matcher.match(label);
    if (!match.matched) {
      drops.push_back(match.drop);
      continue;
    }
    const ChipLabel fields{label.class_name, label.group, label.id};
    store.add_chip(config.scenes[match.choice.scene], matcher.grid(match.choice.scene), match.choice.chip.col,
                   match.choice.chip.row, match.valid_fraction, matcher.values(), matcher.valid(), nullptr, &fields);
    used[match.choice.scene] = true;
    ++kept[label.class_name];
  }
  progress.finish();

  log_summary(classes, kept, drops);
  LabelSummary summary;
  summary.kept = store.chip_count();
  summary.dropped = static_cast<std::int64_t>(drops.size());
  summary.labels = summary.kept + summary.dropped;
  const auto beside = drop_report_path(options.output);
  if (summary.kept == 0) {
    write_file_atomic(beside, drop_report_csv(drops));
    fail_runtime("no label gave a chip: of " + std::to_string(summary.labels) + " labels, " +
                 describe_counts(count_reasons(drops)) + "; the reasons per label are in " + beside.string() +
                 ". Check the labels' CRS and dates against the scenes, match.max_days and chips.min_valid");
  }
  store.add_file(kDropReportName, drop_report_csv(drops));
  log::info("label: " + std::to_string(summary.kept) + " chips of " + std::to_string(classes.size()) +
            " classes into " + options.output.string() + ", " + std::to_string(summary.dropped) + " labels dropped");
  store.add_file("log.txt", log::take_capture());

  std::vector<StoreScene> described;
  for (std::size_t s = 0; s < config.scenes.size(); ++s) {
    if (used[s]) described.push_back(store_scene(config.scenes[s], matcher.grid(s)));
  }
  store.finish(std::move(described), classes);
  std::error_code ec;
  if (std::filesystem::remove(beside, ec)) {
    log::info("removed " + beside.string() + ", the drop report of an earlier run that wrote no store");
  }
  log::info("label: wrote " + std::to_string(summary.kept) + " chips to " + options.output.string() + ", " +
            std::to_string(summary.dropped) + " labels dropped (see " +
            (options.output / kDropReportName).string() + ")");
  return summary;
}

}  // namespace tinct
