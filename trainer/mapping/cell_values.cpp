#include "mapping/cell_values.hpp"

#include <algorithm>
#include <cmath>

namespace tinct {

float normalised_entropy(const float* probabilities, int classes) {
  if (classes < 2) return 0.0f;
  double entropy = 0;
  for (int k = 0; k < classes; ++k) {
    const double p = probabilities[k];
    if (p > 0) entropy -= p * std::log(p);
  }
  return static_cast<float>(std::clamp(entropy / std::log(static_cast<double>(classes)), 0.0, 1.0));
}

std::uint8_t probability_code(float probability) {
  return static_cast<std::uint8_t>(std::clamp(std::lround(static_cast<double>(probability) * 250.0), 0L, 250L));
}

}  // namespace tinct
