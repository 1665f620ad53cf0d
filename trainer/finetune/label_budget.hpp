// A stratified label budget: N training chips per class (or a fraction of each
// class), drawn with the seed, so learning curves over budgets are reproducible.
#pragma once

#include <cstdint>
#include <vector>

#include "batches/chip_collection.hpp"

namespace tinct {

struct LabelBudget {
  int per_class = 0;      // 0 = no cap
  double fraction = 1.0;  // used when per_class is 0
};

// Classes with fewer chips than the budget keep all they have (logged).
std::vector<ChipRef> apply_budget(const ChipCollection& chips, const std::vector<ChipRef>& train,
                                  const LabelBudget& budget, std::uint64_t seed);

}  // namespace tinct
