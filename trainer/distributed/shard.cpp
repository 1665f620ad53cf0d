#include "distributed/shard.hpp"

#include <algorithm>
#include <string>

#include "util/error.hpp"

namespace tinct {

ShardRange shard_range(std::int64_t count, int rank, int world) {
  if (world < 1 || rank < 0 || rank >= world || count < 0) {
    fail_runtime("shard_range: rank " + std::to_string(rank) + " of " + std::to_string(world) + " over " +
                 std::to_string(count) + " items is not a valid slice (a bug, please report it)");
  }
  const std::int64_t base = count / world, extra = count % world;
  ShardRange range;
  range.begin = rank * base + std::min<std::int64_t>(rank, extra);
  range.end = range.begin + base + (rank < extra ? 1 : 0);
  return range;
}

}  // namespace tinct
