// Which chips make up each global batch: back-to-back epochs, each a seeded
// permutation of the training chips. Batch `step` depends only on (seed, step),
// so a resumed run sees exactly the batches an uninterrupted one would have.
#pragma once

#include <cstdint>
#include <mutex>
#include <vector>

namespace tinct {

class BatchOrder {
 public:
  BatchOrder(std::int64_t chip_count, int batch_size, std::uint64_t seed);

  // Positions (0..chip_count-1) of the chips of global batch `step`.
  std::vector<std::int64_t> batch(std::int64_t step) const;
  std::int64_t epoch_of(std::int64_t step) const;
  std::int64_t steps_per_epoch() const;

 private:
  // Callers hold mutex_: the loader thread and direct builds share the cache.
  const std::vector<std::int64_t>& permutation(std::int64_t epoch) const;

  std::int64_t chip_count_;
  int batch_size_;
  std::uint64_t seed_;
  mutable std::mutex mutex_;
  mutable std::int64_t cached_epoch_ = -1;
  mutable std::vector<std::int64_t> cached_;
};

}  // namespace tinct
