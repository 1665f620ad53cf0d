#include "batches/chip_collection.hpp"

#include <algorithm>
#include <mutex>
#include <set>
#include <utility>

#include "util/error.hpp"
#include "util/running_stats.hpp"

namespace tinct {
namespace {

// Chan's merge needs only (n, mean, M2), and M2 = n * population variance.
RunningStats stats_from(const BandStatistics& s) {
  return RunningStats::from_moments(s.count, s.mean, s.std * s.std * static_cast<double>(s.count));
}

}  // namespace

BandNormalisation merge_statistics(const std::vector<const StoreManifest*>& manifests) {
  BandNormalisation result;
  const StoreManifest& first = *manifests.front();
  for (std::size_t b = 0; b < first.bands.size(); ++b) {
    RunningStats total;
    for (const StoreManifest* manifest : manifests) total.merge(stats_from(manifest->statistics[b]));
    result.bands.push_back(first.bands[b].name);
    result.mean.push_back(total.mean());
    const double std = total.population_std();
    result.std.push_back(std > 0 ? std : 1.0);  // a constant band: centre it, do not divide by 0
  }
  return result;
}

struct ChipCollection::ReadTally {
  std::mutex mutex;
  std::set<std::pair<int, std::int64_t>> chips;
};

void ChipCollection::note_read(const ChipRef& ref) const {
  std::lock_guard<std::mutex> lock(reads_->mutex);
  reads_->chips.insert({ref.store, ref.chip});
}

std::int64_t ChipCollection::chips_read() const {
  std::lock_guard<std::mutex> lock(reads_->mutex);
  return static_cast<std::int64_t>(reads_->chips.size());
}

void ChipCollection::forget_reads() const {
  std::lock_guard<std::mutex> lock(reads_->mutex);
  reads_->chips.clear();
}

ChipCollection::ChipCollection(const std::vector<std::filesystem::path>& stores)
    : reads_(std::make_shared<ReadTally>()) {
  if (stores.empty()) fail_usage("no chip store given");
  for (const auto& path : stores) stores_.push_back(StoreReader::open(path));
  const StoreReader& first = stores_.front();
  chip_size_ = first.chip_size();
  std::vector<const StoreManifest*> manifests;
  for (const StoreReader& store : stores_) {
    if (store.chip_size() != chip_size_) {
      fail_runtime(store.path().string() + ": chips of " + std::to_string(store.chip_size()) + " px, but " +
                   first.path().string() + " has " + std::to_string(chip_size_) + " px; pair all stores alike");
    }
    if (store.manifest().bands.size() != first.manifest().bands.size()) {
      fail_runtime(store.path().string() + ": its bands differ from " + first.path().string() + "'s");
    }
    for (std::size_t b = 0; b < first.manifest().bands.size(); ++b) {
      if (store.manifest().bands[b].name != first.manifest().bands[b].name) {
        fail_runtime(store.path().string() + ": band " + std::to_string(b + 1) + " is " +
                     store.manifest().bands[b].name + ", but " + first.path().string() + " has " +
                     first.manifest().bands[b].name + "; all stores need the same bands in the same order");
      }
    }
    manifests.push_back(&store.manifest());
  }
  normalisation_ = merge_statistics(manifests);
  index_classes();
}

void ChipCollection::index_classes() {
  const StoreManifest& first = stores_.front().manifest();
  if (first.kind != StoreKind::labels) return;
  classes_ = first.classes;
  for (const StoreReader& store : stores_) {
    if (store.manifest().classes != classes_) {
      fail_runtime(store.path().string() + ": its class list differs from " + stores_.front().path().string() +
                   "'s; make the label stores with the same labels.classes");
    }
    std::vector<int> indices;
    for (std::int64_t c = 0; c < store.chip_count(); ++c) {
      const std::string label = store.record(c).label;
      const auto found = std::find(classes_.begin(), classes_.end(), label);
      if (found == classes_.end()) {
        fail_runtime(store.path().string() + ": chip " + std::to_string(c) + " has class \"" + label +
                     "\", which the manifest does not list; rebuild the store with tinct label");
      }
      indices.push_back(static_cast<int>(found - classes_.begin()));
    }
    class_index_.push_back(std::move(indices));
  }
}

int ChipCollection::class_of(const ChipRef& ref) const {
  if (classes_.empty()) return -1;
  return class_index_.at(static_cast<std::size_t>(ref.store)).at(static_cast<std::size_t>(ref.chip));
}

void ChipCollection::use_normalisation(const BandNormalisation& normalisation) {
  if (normalisation.bands != normalisation_.bands) {
    std::string ours, theirs;
    for (const auto& b : normalisation_.bands) ours += (ours.empty() ? "" : ", ") + b;
    for (const auto& b : normalisation.bands) theirs += (theirs.empty() ? "" : ", ") + b;
    fail_usage("the stores hold bands [" + ours + "] but the encoder was trained on [" + theirs +
               "]; make the label store with the pretraining inputs, in the same order");
  }
  normalisation_ = normalisation;
}

std::vector<ChipRef> ChipCollection::all() const {
  std::vector<ChipRef> refs;
  for (std::size_t s = 0; s < stores_.size(); ++s) {
    for (std::int64_t c = 0; c < stores_[s].chip_count(); ++c) refs.push_back({static_cast<int>(s), c});
  }
  return refs;
}

std::int64_t ChipCollection::size() const {
  std::int64_t total = 0;
  for (const StoreReader& store : stores_) total += store.chip_count();
  return total;
}

std::string ChipCollection::block_of(const ChipRef& ref) const { return store(ref.store).record(ref.chip).block; }

}  // namespace tinct
