// Pairs one scene: opens it on its grid, fits the colour stretch, checks the
// colour's co-registration, cuts chips by the plan, keeps those with enough valid
// pixels and hands each (input bands, Lab colour, validity) to the store.
#pragma once

#include <cstdint>

#include "chips/store_builder.hpp"
#include "chips/store_manifest.hpp"
#include "pairing/pair_config.hpp"

namespace tinct {

struct PairTally {
  std::int64_t planned = 0;
  std::int64_t below_min_valid = 0;
  std::int64_t written = 0;
};

struct ScenePairing {
  StoreScene scene;
  PairTally tally;
};

ScenePairing pair_scene(const PairConfig& config, const SceneSpec& spec, std::uint64_t scene_number,
                        StoreBuilder& store);

}  // namespace tinct
