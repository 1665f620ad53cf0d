// The `stores:` list of a training config: paths (relative to the config's folder)
// that must hold stores of the expected kind; the first store's band count is
// returned so the model can be sized before any store is opened in full.
#pragma once

#include <filesystem>
#include <string>
#include <vector>

#include "chips/store_manifest.hpp"
#include "util/config_node.hpp"

namespace tinct {

std::vector<std::filesystem::path> read_store_list(const ConfigNode& root, StoreKind kind, int& bands);

// For a store named on the command line (`option`, e.g. "--on"): fails (usage) when
// it is missing or of the other kind, saying which kind it is and how to make the
// right one.
void require_store_kind(const std::filesystem::path& store, StoreKind kind, const std::string& option);

}  // namespace tinct
