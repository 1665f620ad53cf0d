// Whether the chip stores of a training config suit the model that will train on
// them, checked while the config is read, so `tinct check` reports what the run
// would refuse: every store's chip side a multiple of the encoder's stride, the
// stores alike in chip size and bands, and for a model from a pretrain run, the
// run's chip size and band order. Every conflict is reported at once, each with the
// config file, key and line. No LibTorch here: the CLI reads configs through it.
#pragma once

#include <filesystem>
#include <string>
#include <vector>

#include "models/model_spec.hpp"
#include "util/config_node.hpp"

namespace tinct {

// The stores (the config's `stores:` list, in order) against an encoder.
std::vector<std::string> store_conflicts(const ConfigNode& root, const std::vector<std::filesystem::path>& stores,
                                         const EncoderSpec& encoder);

// The stores against a pretrain run's encoder.pt (its chip size, bands and
// architecture); `run_key` is the config node holding the run's path under `key`.
std::vector<std::string> store_conflicts_with_run(const ConfigNode& root,
                                                  const std::vector<std::filesystem::path>& stores,
                                                  const std::filesystem::path& run, const ConfigNode& run_key,
                                                  const std::string& key);

// Fails (usage) listing every conflict; does nothing when there is none.
void require_no_conflicts(const std::vector<std::string>& conflicts);

}  // namespace tinct
