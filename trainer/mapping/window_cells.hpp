// Turns the model's outputs for a set of windows into the values a map shows: calibrated
// probabilities, class, normalised entropy, the members' disagreement, and the
// area-of-applicability index and mask.
#pragma once

#include <vector>

#include "mapping/cell_values.hpp"
#include "mapping/map_model.hpp"
#include "mapping/run_evidence.hpp"

namespace tinct {

// cells[i].valid says which windows of `outputs` to fill. The applicability index only
// from exact windows' features (with_applicability).
void fill_cells(const WindowOutputs& outputs, int classes, int feature_count, const RunEvidence& evidence,
                int threads, bool with_applicability, std::vector<CellValues>& cells);

// The applicability index and mask of the valid cells from their exact windows' features (N, F).
void fill_applicability(const float* features, int feature_count, const RunEvidence& evidence, int threads,
                        std::vector<CellValues>& cells);

}  // namespace tinct
