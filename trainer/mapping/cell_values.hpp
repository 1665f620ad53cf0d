// What a map shows for one window from its logits and features: calibrated class
// probabilities (softmax of logits / T), the most probable class, the normalised entropy
// (entropy / ln K: 0 certain, 1 uniform), for an ensemble the members' disagreement
// (map_model.hpp) and the area-of-applicability index and mask.
#pragma once

#include <cstdint>
#include <vector>

namespace tinct {

struct CellValues {
  bool valid = false;  // enough valid pixels in the window
  std::vector<float> probabilities;
  int predicted = 0;
  float uncertainty = 0;
  float disagreement = 0;
  float aoa_index = 0;
  bool inside = true;
};

// probabilities: K values summing to 1; entropy over ln K.
float normalised_entropy(const float* probabilities, int classes);

// The uint8 code of a probability: round(p * 250), so 0-250; 255 is nodata.
std::uint8_t probability_code(float probability);
inline constexpr std::uint8_t kByteNodata = 255;

}  // namespace tinct
