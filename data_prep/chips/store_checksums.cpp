#include "chips/store_checksums.hpp"

#include <mutex>
#include <set>

#include "util/error.hpp"
#include "util/sha256.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

const char* const kDataFiles[] = {"bands.bin", "colour.bin", "valid.bin", "chips.csv"};

// What identifies a store already checked in this process: its path, and each file's
// size and modification time (a store rewritten meanwhile is checked again).
std::string identity_of(const fs::path& store) {
  std::string identity = fs::weakly_canonical(store).string();
  for (const char* name : kDataFiles) {
    std::error_code ec;
    const fs::path file = store / name;
    const auto size = fs::file_size(file, ec);
    if (ec) continue;
    const auto time = fs::last_write_time(file, ec).time_since_epoch().count();
    identity += "|" + std::string(name) + ":" + std::to_string(size) + ":" + std::to_string(time);
  }
  return identity;
}

}  // namespace

void verify_store_checksums(const fs::path& store, const StoreManifest& manifest) {
  if (manifest.checksums.empty()) return;
  static std::mutex mutex;
  static std::set<std::string> verified;
  const std::string identity = identity_of(store);
  {
    std::lock_guard<std::mutex> lock(mutex);
    if (verified.count(identity)) return;
  }
  for (const auto& [name, recorded] : manifest.checksums) {
    const fs::path file = store / name;
    if (!fs::exists(file)) {
      fail_runtime(file.string() + " is missing but the manifest records its checksum; the store is incomplete: "
                   "rebuild it with " + rebuild_command(manifest.kind));
    }
    const std::string found = sha256_file(file);
    if (found != recorded) {
      fail_runtime(file.string() + " is damaged: its SHA-256 is " + found.substr(0, 16) + "..., not the " +
                   recorded.substr(0, 16) + "... recorded in manifest.yaml when the store was written. "
                   "Restore the store from a copy or rebuild it with " + rebuild_command(manifest.kind));
    }
  }
  std::lock_guard<std::mutex> lock(mutex);
  verified.insert(identity);
}

}  // namespace tinct
