// One sort, then a running maximum over the scaled p values in ascending order.
#include "assess/holm_adjustment.hpp"

#include <algorithm>
#include <cmath>
#include <numeric>
#include <string>

#include "util/error.hpp"

namespace tinct {

std::vector<double> holm_adjust(const std::vector<double>& p_values) {
  for (std::size_t i = 0; i < p_values.size(); ++i)
    if (!(p_values[i] >= 0 && p_values[i] <= 1))
      fail_usage("holm adjustment: p value " + std::to_string(i) + " is " +
                 std::to_string(p_values[i]) + ", outside [0, 1]");
  const std::size_t m = p_values.size();
  std::vector<std::size_t> order(m);
  std::iota(order.begin(), order.end(), 0);
  std::stable_sort(order.begin(), order.end(),
                   [&](std::size_t a, std::size_t b) { return p_values[a] < p_values[b]; });
  std::vector<double> adjusted(m);
  double running = 0;
  for (std::size_t rank = 0; rank < m; ++rank) {
    const double scaled = std::min(1.0, static_cast<double>(m - rank) * p_values[order[rank]]);
    running = std::max(running, scaled);
    adjusted[order[rank]] = running;
  }
  return adjusted;
}

}  // namespace tinct
