// Batches for training, assembled on a background thread a few steps ahead of the
// training loop (the memory-mapped stores are read there, not in the step).
// Batch `step` is a pure function of (seed, step): chips from BatchOrder, one
// seeded symmetry per chip when augmenting. For data-parallel training each rank
// takes its slice of every global batch.
#pragma once

#include <condition_variable>
#include <cstdint>
#include <deque>
#include <exception>
#include <mutex>
#include <thread>
#include <vector>

#include "batches/batch.hpp"
#include "batches/batch_order.hpp"

namespace tinct {

struct LoaderSettings {
  int batch_size = 32;   // global batch, over all ranks
  std::uint64_t seed = 0;
  bool augment = true;
  std::int64_t first_step = 0;
  int depth = 3;         // batches prepared ahead
  int rank = 0;
  int world = 1;
};

class BatchLoader {
 public:
  BatchLoader(const ChipCollection& collection, std::vector<ChipRef> chips, LoaderSettings settings);
  ~BatchLoader();
  BatchLoader(const BatchLoader&) = delete;
  BatchLoader& operator=(const BatchLoader&) = delete;

  // The next batch in step order; rethrows a failure of the loader thread.
  Batch next();
  std::int64_t steps_per_epoch() const { return order_.steps_per_epoch(); }
  std::int64_t epoch_of(std::int64_t step) const { return order_.epoch_of(step); }

  // The batch of `step` built in the calling thread (what next() returns for it).
  Batch build(std::int64_t step) const;

 private:
  void produce();

  const ChipCollection& collection_;
  std::vector<ChipRef> chips_;
  LoaderSettings settings_;
  BatchOrder order_;
  std::mutex mutex_;
  std::condition_variable changed_;
  std::deque<Batch> ready_;
  std::exception_ptr failure_;
  bool stopping_ = false;
  std::thread worker_;
};

}  // namespace tinct
