#include "chips/store_list.hpp"

#include "util/error.hpp"

namespace fs = std::filesystem;

namespace tinct {

std::vector<fs::path> read_store_list(const ConfigNode& root, StoreKind kind, int& bands) {
  const std::string maker = rebuild_command(kind);
  std::vector<fs::path> stores;
  for (const auto& item : root.items("stores")) {
    fs::path path = item.scalar_text();
    if (path.is_relative()) path = root.folder() / path;
    path = path.lexically_normal();
    YAML::Node resolved = item.resolved();
    resolved = path.string();  // absolute in config.resolved.yaml, so a run finds its stores from anywhere
    if (!fs::exists(path / "manifest.yaml")) {
      item.fail("", "no chip store at " + path.string() + " (relative paths are read from the config "
                    "file's folder); make it with " + maker);
    }
    stores.push_back(path);
  }
  if (stores.empty()) root.fail("stores", "required: list at least one " + to_string(kind) + " store (" + maker + ")");
  const StoreManifest manifest = read_manifest(stores.front() / "manifest.yaml");
  if (manifest.kind != kind) {
    root.fail("stores", stores.front().string() + " is a " + to_string(manifest.kind) + " store; this needs " +
                            to_string(kind) + " stores (" + maker + ")");
  }
  bands = static_cast<int>(manifest.bands.size());
  return stores;
}

void require_store_kind(const fs::path& store, StoreKind kind, const std::string& option) {
  const auto noun = [](StoreKind k) { return std::string(k == StoreKind::labels ? "label store" : "pair store"); };
  if (!fs::exists(store / "manifest.yaml")) {
    fail_usage(option + ": no chip store at " + store.string() + "; give a " + noun(kind) + " (made by " +
               rebuild_command(kind) + ")");
  }
  const StoreKind found = read_manifest(store / "manifest.yaml").kind;
  if (found != kind) {
    fail_usage(option + ": " + store.string() + " is a " + noun(found) + " (made by " + rebuild_command(found) +
               "); this needs a " + noun(kind) + ", made by " + rebuild_command(kind) +
               (kind == StoreKind::labels ? " from field labels" : " from unlabelled scenes"));
  }
}

}  // namespace tinct
