// Early-stopping validation carved out of a run's own labels (the budgeted chips), by
// whole split units, so validation chips never share a block or group with training
// chips and no labels beyond the budget are read. Stratified: each class aims at
// validation_fraction of its chips (at least one, and at least one left for training).
#pragma once

#include <cstdint>
#include <string>
#include <vector>

#include "batches/chip_collection.hpp"

namespace tinct {

struct CarvedLabels {
  std::vector<ChipRef> train, validation;  // in the order of the labels given
};

// units[i] is the split unit of labels[i]. Units are taken in an order shuffled with
// `seed`, each one when it brings the per-class validation counts closer to their
// targets; a class still missing from validation then gets the unit that fits it best.
CarvedLabels carve_validation(const ChipCollection& chips, const std::vector<ChipRef>& labels,
                              const std::vector<std::string>& units, double fraction, std::uint64_t seed);

}  // namespace tinct
