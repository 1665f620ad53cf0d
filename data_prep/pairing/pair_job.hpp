// The whole of `tinct pair`: selects this shard's scenes, decides the store's
// layout, pairs scene after scene into one store and finishes it with its
// statistics. Fails, leaving no store, when no chip survives (with the reasons).
#pragma once

#include <cstdint>
#include <filesystem>
#include <string>

#include "pairing/pair_config.hpp"

namespace tinct {

struct PairJobOptions {
  std::filesystem::path output;
  bool replace = false;
  int shard_index = 0;  // this process pairs scenes i, i+n, i+2n, ... (0-based)
  int shard_count = 1;
  std::string config_hash;
};

struct PairSummary {
  int scenes = 0;
  std::int64_t planned = 0;
  std::int64_t below_min_valid = 0;
  std::int64_t written = 0;
};

PairSummary run_pair_job(const PairConfig& config, const PairJobOptions& options);

// Parses "i/n" (0 <= i < n) for --shard.
void parse_shard(const std::string& text, int& index, int& count);

}  // namespace tinct
