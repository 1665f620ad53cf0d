#include "batches/batch_loader.hpp"

#include <random>

#include "batches/chip_symmetry.hpp"
#include "util/error.hpp"

namespace tinct {

BatchLoader::BatchLoader(const ChipCollection& collection, std::vector<ChipRef> chips, LoaderSettings settings)
    : collection_(collection),
      chips_(std::move(chips)),
      settings_(settings),
      order_(static_cast<std::int64_t>(chips_.size()), settings.batch_size, settings.seed) {
  if (settings_.batch_size % settings_.world != 0) {
    fail_usage("train.batch (" + std::to_string(settings_.batch_size) + ") must be divisible by the number of "
               "processes (" + std::to_string(settings_.world) + ")");
  }
  worker_ = std::thread([this] { produce(); });
}

BatchLoader::~BatchLoader() {
  {
    std::lock_guard<std::mutex> lock(mutex_);
    stopping_ = true;
  }
  changed_.notify_all();
  worker_.join();
}

Batch BatchLoader::build(std::int64_t step) const {
  const std::vector<std::int64_t> positions = order_.batch(step);
  const int local = settings_.batch_size / settings_.world;
  std::vector<ChipRef> refs;
  std::vector<int> symmetries;
  for (int i = settings_.rank * local; i < (settings_.rank + 1) * local; ++i) {
    refs.push_back(chips_[static_cast<std::size_t>(positions[static_cast<std::size_t>(i)])]);
    // One generator per (seed, step, slot): independent of thread timing and of rank count.
    std::mt19937_64 random(settings_.seed ^ (static_cast<std::uint64_t>(step) * 0x100000001B3ULL + i));
    symmetries.push_back(settings_.augment ? static_cast<int>(random() % kSymmetries) : 0);
  }
  Batch batch = assemble_batch(collection_, refs, symmetries);
  batch.step = step;
  return batch;
}

void BatchLoader::produce() {
  try {
    for (std::int64_t step = settings_.first_step;; ++step) {
      Batch batch = build(step);
      std::unique_lock<std::mutex> lock(mutex_);
      changed_.wait(lock, [this] { return stopping_ || static_cast<int>(ready_.size()) < settings_.depth; });
      if (stopping_) return;
      ready_.push_back(std::move(batch));
      changed_.notify_all();
    }
  } catch (...) {
    std::lock_guard<std::mutex> lock(mutex_);
    failure_ = std::current_exception();
    changed_.notify_all();
  }
}

Batch BatchLoader::next() {
  std::unique_lock<std::mutex> lock(mutex_);
  changed_.wait(lock, [this] { return !ready_.empty() || failure_; });
  if (ready_.empty()) std::rethrow_exception(failure_);
  Batch batch = std::move(ready_.front());
  ready_.pop_front();
  changed_.notify_all();
  return batch;
}

}  // namespace tinct
