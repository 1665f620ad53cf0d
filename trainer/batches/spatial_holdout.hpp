// Splits chips into training and validation by spatial block: a seeded share of
// the blocks is held out whole, so validation measures how the model does on
// ground it has not seen, not on the neighbours of its training chips.
#pragma once

#include <cstdint>
#include <vector>

#include "batches/chip_collection.hpp"

namespace tinct {

struct ChipSplit {
  std::vector<ChipRef> train;
  std::vector<ChipRef> validation;
  int train_blocks = 0;
  int validation_blocks = 0;
};

// `fraction` of the blocks (at least one) go to validation. Fails (usage) when the
// chips cover fewer than two blocks.
ChipSplit hold_out_blocks(const ChipCollection& chips, double fraction, std::uint64_t seed);

}  // namespace tinct
