#include "finetune/run_chips.hpp"

namespace tinct {

RunChips run_chips(const FinetuneConfig& config) {
  RunChips result{ChipCollection(config.stores), {}, {}};
  result.split = split_labels(result.chips, config.split, config.budget);
  result.train = result.split.train;  // the budget is applied inside the split
  return result;
}

}  // namespace tinct
