// Brute-force squared Euclidean distances from query rows to a fixed set of reference rows,
// laid out for the cache: the reference rows are cut into tiles of kTileRows rows stored
// feature-major, and queries are taken kQueryBlock at a time, so each reference value loaded
// serves several queries and the inner loop runs over contiguous floats the compiler
// vectorises. Differences are squared directly (no |a|^2 + |b|^2 - 2ab), so equal rows are at
// distance exactly 0. Cost: count x features multiply-adds per query.
#pragma once

#include <cstddef>
#include <vector>

namespace tinct {

class DistanceTiles {
 public:
  static constexpr int kTileRows = 256;
  static constexpr int kQueryBlock = 8;

  DistanceTiles() = default;
  // rows is (count, features) row-major; copied, so the caller may free it.
  DistanceTiles(const float* rows, std::size_t count, int features);

  std::size_t count() const { return count_; }
  int features() const { return features_; }

  // queries is (query_count, features) row-major; out receives (query_count, count())
  // row-major squared distances. One thread; callers split large query sets between threads.
  void squared_distances(const float* queries, std::size_t query_count, float* out) const;

 private:
  std::size_t count_ = 0;
  int features_ = 0;
  std::vector<float> tiles_;  // (tiles, features, kTileRows), the last tile padded with zeros
};

}  // namespace tinct
