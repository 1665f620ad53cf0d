// Checksums of a store's data files: the writer records the SHA-256 of bands.bin,
// colour.bin, valid.bin and chips.csv in the manifest (hashed as it writes them); opening the store reads each
// file once (in blocks) and compares, so flipped bytes fail at once, naming the file,
// instead of training on damaged chips. A store is checked once per process.
#pragma once

#include <filesystem>
#include <map>
#include <string>

#include "chips/store_manifest.hpp"

namespace tinct {

// Fails (runtime) naming the first file whose SHA-256 differs from the manifest's. A
// manifest without checksums (an older store) is accepted as it is.
void verify_store_checksums(const std::filesystem::path& store, const StoreManifest& manifest);

}  // namespace tinct
