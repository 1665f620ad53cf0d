#include "finetune/label_budget.hpp"

#include <algorithm>
#include <cmath>
#include <map>
#include <random>
#include <set>

#include "util/log.hpp"

namespace tinct {
namespace {

std::size_t wanted(const LabelBudget& budget, std::size_t available) {
  if (budget.per_class > 0) return static_cast<std::size_t>(budget.per_class);
  return std::max<std::size_t>(1, static_cast<std::size_t>(std::lround(budget.fraction * available)));
}

}  // namespace

std::vector<ChipRef> apply_budget(const ChipCollection& chips, const std::vector<ChipRef>& pool,
                                  const LabelBudget& budget) {
  if (!budget.limits()) return pool;
  std::map<int, std::vector<std::size_t>> by_class;  // positions in pool
  for (std::size_t i = 0; i < pool.size(); ++i) by_class[chips.class_of(pool[i])].push_back(i);
  std::mt19937_64 random(budget.seed ^ 0xB0D6E7ULL);
  std::set<std::size_t> kept;
  for (auto& [label, positions] : by_class) {
    std::shuffle(positions.begin(), positions.end(), random);
    const std::size_t want = wanted(budget, positions.size());
    if (want > positions.size()) {
      log::warning("budget: class \"" + chips.classes()[static_cast<std::size_t>(label)] + "\" has only " +
                   std::to_string(positions.size()) + " labelled chips outside the test fold, fewer than " +
                   std::to_string(want));
    }
    kept.insert(positions.begin(), positions.begin() + static_cast<long>(std::min(want, positions.size())));
  }
  std::vector<ChipRef> drawn;
  for (const std::size_t i : kept) drawn.push_back(pool[i]);
  return drawn;
}

}  // namespace tinct
