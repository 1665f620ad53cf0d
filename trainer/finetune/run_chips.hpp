// Which labelled chips a fine-tune of this config trains, validates and is tested on: the
// split and label budget exactly as the finetune job draws them (same calls, same seeds).
// Studies use it to fit pixel baselines on the same chips as the deep arms, and to
// calibrate a finished run on its validation chips.
#pragma once

#include <vector>

#include "batches/chip_collection.hpp"
#include "finetune/finetune_config.hpp"
#include "finetune/label_split.hpp"

namespace tinct {

struct RunChips {
  ChipCollection chips;
  LabelSplit split;
  std::vector<ChipRef> train;  // split.train: the budgeted labels less the validation carved from them
};

RunChips run_chips(const FinetuneConfig& config);

}  // namespace tinct
