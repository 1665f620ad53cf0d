#include "finetune/label_budget.hpp"

#include <algorithm>
#include <cmath>
#include <map>
#include <random>

#include "util/log.hpp"

namespace tinct {

std::vector<ChipRef> apply_budget(const ChipCollection& chips, const std::vector<ChipRef>& train,
                                  const LabelBudget& budget, std::uint64_t seed) {
  if (budget.per_class == 0 && budget.fraction >= 1.0) return train;
  std::map<int, std::vector<ChipRef>> by_class;
  for (const ChipRef& ref : train) by_class[chips.class_of(ref)].push_back(ref);
  std::mt19937_64 random(seed ^ 0xB0D6E7ULL);
  std::vector<ChipRef> kept;
  for (auto& [label, refs] : by_class) {
    std::shuffle(refs.begin(), refs.end(), random);
    const std::size_t want = budget.per_class > 0
                                 ? static_cast<std::size_t>(budget.per_class)
                                 : std::max<std::size_t>(1, static_cast<std::size_t>(std::lround(budget.fraction * refs.size())));
    if (want > refs.size()) {
      log::warning("budget: class \"" + chips.classes()[static_cast<std::size_t>(label)] + "\" has only " +
                   std::to_string(refs.size()) + " training chips, fewer than " + std::to_string(want));
    }
    kept.insert(kept.end(), refs.begin(), refs.begin() + static_cast<long>(std::min(want, refs.size())));
  }
  return kept;
}

}  // namespace tinct
