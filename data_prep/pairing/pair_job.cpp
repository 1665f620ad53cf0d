#include "pairing/pair_job.hpp"

#include <cstdio>

#include "chips/band_storage.hpp"
#include "chips/store_writer.hpp"
#include "pairing/scene_pairer.hpp"
#include "raster/raster.hpp"
#include "raster/target_grid.hpp"
#include "util/error.hpp"
#include "util/log.hpp"
#include "util/version_info.hpp"

namespace tinct {
namespace {

std::string shared_crs(const std::vector<StoreScene>& scenes) {
  for (const auto& scene : scenes) {
    if (!same_crs(scene.crs, scenes.front().crs)) return "";
  }
  return scenes.empty() ? "" : scenes.front().crs;
}

[[noreturn]] void fail_no_chips(const PairSummary& summary, const PairConfig& config) {
  char text[512];
  std::snprintf(text, sizeof(text),
                "no chip passed: %lld planned over %d scenes, %lld below chips.min_valid %.2f (nodata, "
                "mask or colour gaps). Lower chips.min_valid, check the masks and nodata values, or "
                "choose smaller chips",
                static_cast<long long>(summary.planned), summary.scenes,
                static_cast<long long>(summary.below_min_valid), config.chips.min_valid);
  fail_runtime(text);
}

}  // namespace

void parse_shard(const std::string& text, int& index, int& count) {
  int i = -1, n = -1;
  char tail = 0;
  if (std::sscanf(text.c_str(), "%d/%d%c", &i, &n, &tail) != 2 || n < 1 || i < 0 || i >= n) {
    fail_usage("--shard: expected i/n with 0 <= i < n (e.g. 0/4), got \"" + text + "\"");
  }
  index = i;
  count = n;
}

PairSummary run_pair_job(const PairConfig& config, const PairJobOptions& options) {
  std::vector<const SceneSpec*> scenes;
  for (std::size_t i = options.shard_index; i < config.scenes.size(); i += options.shard_count) {
    scenes.push_back(&config.scenes[i]);
  }
  if (scenes.empty()) fail_usage("shard " + std::to_string(options.shard_index) + " has no scenes to pair");
  const StorageType storage = storage_for_inputs(scenes, config.inputs);
  const StoreLayout layout =
      chip_store_layout(StoreKind::pairs, config.chips.size, config.inputs, storage, config.sensor);
  StoreWriter writer(options.output, layout, options.replace);

  PairSummary summary;
  StoreManifest manifest;
  std::int64_t next_index = 0;
  for (const SceneSpec* spec : scenes) {
    const auto scene_number = static_cast<std::uint64_t>(spec - config.scenes.data());
    const ScenePairing pairing = pair_scene(config, *spec, scene_number, storage, writer, next_index);
    log::info("scene " + spec->id + ": " + std::to_string(pairing.tally.written) + " chips kept of " +
              std::to_string(pairing.tally.planned) + " planned (" +
              std::to_string(pairing.tally.below_min_valid) + " below min_valid)");
    manifest.scenes.push_back(pairing.scene);
    ++summary.scenes;
    summary.planned += pairing.tally.planned;
    summary.below_min_valid += pairing.tally.below_min_valid;
    summary.written += pairing.tally.written;
  }
  if (summary.written == 0) fail_no_chips(summary, config);

  manifest.kind = StoreKind::pairs;
  manifest.chip_size = config.chips.size;
  manifest.bands = store_bands(config.inputs, storage, config.sensor);
  manifest.colour_encoding = ColourEncoding::cielab8;
  manifest.crs = shared_crs(manifest.scenes);
  manifest.pixel_size = config.resolution;
  manifest.config_hash = options.config_hash;
  manifest.tinct_version = tinct_version();
  writer.finish(manifest);
  log::info("pair: wrote " + std::to_string(summary.written) + " chips to " + options.output.string());
  return summary;
}

}  // namespace tinct
