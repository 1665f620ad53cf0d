#include "finetune/run_chips.hpp"

#include "finetune/label_budget.hpp"

namespace tinct {

RunChips run_chips(const FinetuneConfig& config) {
  RunChips result{ChipCollection(config.stores), {}, {}};
  result.split = split_labels(result.chips, config.split);
  result.train = apply_budget(result.chips, result.split.train, config.budget, config.train.seed);
  return result;
}

}  // namespace tinct
