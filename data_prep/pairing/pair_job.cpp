#include "pairing/pair_job.hpp"

#include <cstdio>

#include "chips/store_builder.hpp"
#include "pairing/colour_composer.hpp"
#include "pairing/scene_pairer.hpp"
#include "util/error.hpp"
#include "util/log.hpp"

namespace tinct {
namespace {

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
  StorePlan plan;
  plan.output = options.output;
  plan.replace = options.replace;
  plan.kind = StoreKind::pairs;
  plan.chip_size = config.chips.size;
  plan.inputs = config.inputs;
  plan.pixel_size = config.resolution;
  plan.block_size = config.chips.block_size;
  plan.config_hash = options.config_hash;
  StoreBuilder store(plan, scenes, config.sensor);

  PairSummary summary;
  std::vector<StoreScene> described;
  int skipped = 0;
  for (const SceneSpec* spec : scenes) {
    const auto scene_number = static_cast<std::uint64_t>(spec - config.scenes.data());
    ScenePairing pairing;
    try {
      pairing = pair_scene(config, *spec, scene_number, store);
    } catch (const NoValidColour& e) {
      if (scenes.size() == 1) fail_runtime(std::string(e.what()) + "; it is the only scene: nothing to pair");
      log::warning(std::string(e.what()) + "; skipped");
      ++skipped;
      continue;
    }
    log::info("scene " + spec->id + ": " + std::to_string(pairing.tally.written) + " chips kept of " +
              std::to_string(pairing.tally.planned) + " planned (" +
              std::to_string(pairing.tally.below_min_valid) + " below min_valid)");
    described.push_back(pairing.scene);
    ++summary.scenes;
    summary.planned += pairing.tally.planned;
    summary.below_min_valid += pairing.tally.below_min_valid;
    summary.written += pairing.tally.written;
  }
  if (skipped > 0) log::warning("pair: skipped " + std::to_string(skipped) + " of " + std::to_string(scenes.size()) +
                                " scenes whose colour bands hold no valid pixel");
  if (skipped == static_cast<int>(scenes.size())) fail_runtime("pair: no scene has a valid colour pixel; nothing to pair");
  if (summary.written == 0) fail_no_chips(summary, config);

  store.finish(std::move(described));
  log::info("pair: wrote " + std::to_string(summary.written) + " chips to " + options.output.string());
  return summary;
}

}  // namespace tinct
