// A stratified label budget: N labelled chips per class (or a fraction of each class),
// drawn with the budget's seed from the chips outside the test fold. The budget bounds
// every label a run sees: training and early-stopping validation are both carved from
// the drawn chips, so a run of 5 per class reads at most 5 x classes labelled chips
// before its test.
#pragma once

#include <cstdint>
#include <vector>

#include "batches/chip_collection.hpp"

namespace tinct {

struct LabelBudget {
  int per_class = 0;      // 0 = no cap
  double fraction = 1.0;  // used when per_class is 0
  std::uint64_t seed = 0; // which labels are drawn (budget.seed; split.seed when not given)

  bool limits() const { return per_class > 0 || fraction < 1.0; }
};

// Per class, min(per_class, available) chips, or round(fraction x available) (at least
// one); classes with fewer chips than the budget keep all they have (logged). The result
// keeps `pool`'s order.
std::vector<ChipRef> apply_budget(const ChipCollection& chips, const std::vector<ChipRef>& pool,
                                  const LabelBudget& budget);

}  // namespace tinct
