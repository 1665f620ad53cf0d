// A rank's part of an ordered list (validation chips, a global batch): a contiguous slice,
// slices disjoint and covering the list, sizes differing by at most one (the first
// count % world ranks take one more). Training batches are sliced by BatchLoader itself.
#pragma once

#include <cstdint>

namespace tinct {

struct ShardRange {
  std::int64_t begin = 0;
  std::int64_t end = 0;  // one past the last
  std::int64_t size() const { return end - begin; }
};

ShardRange shard_range(std::int64_t count, int rank, int world);

}  // namespace tinct
