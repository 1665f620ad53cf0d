// Splitting labelled chips into training, validation and test so that scores are
// honest: whole spatial blocks (or groups, e.g. repeated visits of one site) go to
// one side only, and an optional buffer drops training chips close to test chips.
// Random splits are possible but logged as optimistic (spatial autocorrelation).
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "batches/chip_collection.hpp"

namespace tinct {

enum class SplitMethod { blocks, groups, random };

struct SplitSettings {
  SplitMethod method = SplitMethod::blocks;
  double block_size = 2000;  // metres (blocks)
  int folds = 5;
  int fold = 0;              // the test fold
  double buffer = 0;         // metres: training chips this close to a test chip are dropped
  double validation_fraction = 0.2;  // of the training units, for early stopping
  std::uint64_t seed = 0;
};

struct LabelSplit {
  std::vector<ChipRef> train, validation, test;
  int units = 0;              // blocks, groups or chips dealt into folds
  std::int64_t dropped_by_buffer = 0;
};

// Fails (usage) when a class has fewer chips than folds, or a side ends up empty.
LabelSplit split_labels(const ChipCollection& chips, const SplitSettings& settings);

// The unit (block id, group or chip) each chip is dealt by.
std::string split_unit(const ChipCollection& chips, const ChipRef& ref, const SplitSettings& settings);

}  // namespace tinct
