// Several chip stores (one per shard or region) seen as one collection: same band
// list, chip size and storage checked across stores, band statistics merged over
// all of them (Chan et al. merge of count, mean and std), chips addressed by
// (store, chip). No LibTorch here: the batch loader turns chips into tensors.
#pragma once

#include <cstdint>
#include <filesystem>
#include <memory>
#include <string>
#include <vector>

#include "chips/store_reader.hpp"

namespace tinct {

struct ChipRef {
  int store = 0;
  std::int64_t chip = 0;
};

struct BandNormalisation {
  std::vector<std::string> bands;
  std::vector<double> mean;  // reflectance units
  std::vector<double> std;
};

class ChipCollection {
 public:
  // Fails (runtime) when a store is missing or stores disagree on bands or size.
  explicit ChipCollection(const std::vector<std::filesystem::path>& stores);

  const std::vector<std::string>& band_names() const { return normalisation_.bands; }
  int chip_size() const { return chip_size_; }
  int band_count() const { return static_cast<int>(normalisation_.bands.size()); }
  const BandNormalisation& normalisation() const { return normalisation_; }
  // Normalise with other statistics (a pretrained encoder's); bands must match in order.
  void use_normalisation(const BandNormalisation& normalisation);
  std::vector<ChipRef> all() const;
  std::int64_t size() const;
  const StoreReader& store(int index) const { return stores_.at(static_cast<std::size_t>(index)); }
  std::string block_of(const ChipRef& ref) const;  // scene-independent spatial block id
  // Label stores: the shared class list and a chip's class index (-1 for pair stores).
  const std::vector<std::string>& classes() const { return classes_; }
  int class_of(const ChipRef& ref) const;

  // A tally of the distinct chips whose bands were read (assemble_batch notes each), so a
  // run can show, and tests check, that it read no labelled chip beyond its budget.
  void note_read(const ChipRef& ref) const;
  std::int64_t chips_read() const;
  void forget_reads() const;

 private:
  void index_classes();

  std::vector<StoreReader> stores_;
  BandNormalisation normalisation_;
  std::vector<std::string> classes_;
  std::vector<std::vector<int>> class_index_;  // per store, per chip
  int chip_size_ = 0;
  struct ReadTally;
  std::shared_ptr<ReadTally> reads_;
};

// Normalisation from a merged set of per-store statistics (exposed for tests).
BandNormalisation merge_statistics(const std::vector<const StoreManifest*>& manifests);

}  // namespace tinct
