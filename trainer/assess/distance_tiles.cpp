// The kernel holds kQueryBlock x kTileRows running sums (8 KB, in L1) while it walks one tile's
// features; a tile of a few hundred features (a few hundred KB) stays in L2 across the query
// blocks of a call.
#include "assess/distance_tiles.hpp"

#include <algorithm>

namespace tinct {
namespace {

constexpr int kTile = DistanceTiles::kTileRows;
constexpr int kBlock = DistanceTiles::kQueryBlock;

// sums[q][j] = squared distance of query q to row j of the tile.
void tile_block(const float* tile, int features, const float* queries, int query_count,
                float (*sums)[kTile]) {
  for (int q = 0; q < query_count; ++q) std::fill(sums[q], sums[q] + kTile, 0.0f);
  for (int f = 0; f < features; ++f) {
    const float* column = tile + static_cast<std::size_t>(f) * kTile;
    for (int q = 0; q < query_count; ++q) {
      const float value = queries[static_cast<std::size_t>(q) * features + f];
      float* sum = sums[q];
      for (int j = 0; j < kTile; ++j) {
        const float d = value - column[j];
        sum[j] += d * d;
      }
    }
  }
}

}  // namespace

DistanceTiles::DistanceTiles(const float* rows, std::size_t count, int features)
    : count_(count), features_(features) {
  const std::size_t tiles = (count + kTile - 1) / kTile;
  tiles_.assign(tiles * features * kTile, 0.0f);
  for (std::size_t i = 0; i < count; ++i) {
    float* tile = tiles_.data() + (i / kTile) * features * kTile;
    for (int f = 0; f < features; ++f)
      tile[static_cast<std::size_t>(f) * kTile + i % kTile] = rows[i * features + f];
  }
}

void DistanceTiles::squared_distances(const float* queries, std::size_t query_count,
                                      float* out) const {
  alignas(64) float sums[kBlock][kTile];
  const std::size_t tiles = (count_ + kTile - 1) / kTile;
  for (std::size_t start = 0; start < query_count; start += kBlock) {
    const int block = static_cast<int>(std::min<std::size_t>(kBlock, query_count - start));
    const float* block_queries = queries + start * features_;
    for (std::size_t t = 0; t < tiles; ++t) {
      tile_block(tiles_.data() + t * features_ * kTile, features_, block_queries, block, sums);
      const std::size_t first = t * kTile;
      const std::size_t width = std::min<std::size_t>(kTile, count_ - first);
      for (int q = 0; q < block; ++q)
        std::copy(sums[q], sums[q] + width, out + (start + q) * count_ + first);
    }
  }
}

}  // namespace tinct
