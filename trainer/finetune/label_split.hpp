// Splitting labelled chips into training, validation and test so that scores are
// honest: whole spatial blocks (or groups, e.g. repeated visits of one site) are dealt
// into folds with split.seed, one fold is the test; chips within split.buffer of a test
// chip are left unused; the label budget draws from the rest, and validation is carved
// from the drawn labels by whole units, with training chips within the buffer of a
// validation chip left unused too. Every chip's assignment is kept (split.csv).
// Random splits are possible but logged as optimistic (spatial autocorrelation).
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "batches/chip_collection.hpp"
#include "finetune/label_budget.hpp"

namespace tinct {

enum class SplitMethod { blocks, groups, random };

struct SplitSettings {
  SplitMethod method = SplitMethod::blocks;
  double block_size = 2000;  // CRS units (metres, or degrees in a geographic CRS)
  int folds = 5;
  int fold = 0;              // the test fold
  double buffer = 0;         // CRS units: chips closer than this to a test (or validation) chip are unused
  double validation_fraction = 0.2;  // of the budgeted labels, for early stopping
  std::uint64_t seed = 0;    // split.seed: deals units into folds; independent of train.seed
};

enum class ChipRole { train, validation, test, unused };

struct ChipAssignment {
  ChipRef chip;
  std::string unit;    // block id, group or chip
  int fold = 0;        // the fold its unit was dealt to
  ChipRole role = ChipRole::unused;
  std::string reason;  // unused chips: near_test, over_budget or near_validation
};

struct LabelSplit {
  std::vector<ChipRef> train, validation, test;
  std::vector<ChipAssignment> assignment;  // every chip of the collection, in its order
  int units = 0;                           // blocks, groups or chips dealt into folds
  std::int64_t dropped_by_buffer = 0;
  std::int64_t over_budget = 0;
};

// Fails (usage) when a class has fewer chips than folds, a side ends up empty, or a side
// holds fewer than two classes (naming the side and the fold).
LabelSplit split_labels(const ChipCollection& chips, const SplitSettings& settings, const LabelBudget& budget = {});

// The unit (block id, group or chip) each chip is dealt by. Block ids are
// floor(x / block_size) "_" floor(y / block_size), so -0.5 falls in block -1, not 0.
std::string split_unit(const ChipCollection& chips, const ChipRef& ref, const SplitSettings& settings);

const char* role_name(ChipRole role);

}  // namespace tinct
