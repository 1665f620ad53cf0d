#include "batches/batch_order.hpp"

#include <algorithm>
#include <numeric>
#include <random>

#include "util/error.hpp"

namespace tinct {

BatchOrder::BatchOrder(std::int64_t chip_count, int batch_size, std::uint64_t seed)
    : chip_count_(chip_count), batch_size_(batch_size), seed_(seed) {
  if (chip_count_ <= 0) fail_usage("no training chips");
  if (batch_size_ <= 0) fail_usage("batch size must be positive");
}

const std::vector<std::int64_t>& BatchOrder::permutation(std::int64_t epoch) const {
  if (epoch != cached_epoch_) {
    cached_.resize(static_cast<std::size_t>(chip_count_));
    std::iota(cached_.begin(), cached_.end(), 0);
    std::mt19937_64 random(seed_ * 0x9E3779B97F4A7C15ULL + static_cast<std::uint64_t>(epoch));
    std::shuffle(cached_.begin(), cached_.end(), random);
    cached_epoch_ = epoch;
  }
  return cached_;
}

std::vector<std::int64_t> BatchOrder::batch(std::int64_t step) const {
  std::lock_guard<std::mutex> lock(mutex_);
  std::vector<std::int64_t> positions;
  for (int i = 0; i < batch_size_; ++i) {
    const std::int64_t position = step * batch_size_ + i;
    positions.push_back(permutation(position / chip_count_)[static_cast<std::size_t>(position % chip_count_)]);
  }
  return positions;
}

std::int64_t BatchOrder::epoch_of(std::int64_t step) const { return step * batch_size_ / chip_count_; }

std::int64_t BatchOrder::steps_per_epoch() const {
  return std::max<std::int64_t>(1, chip_count_ / batch_size_);
}

}  // namespace tinct
