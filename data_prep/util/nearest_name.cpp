#include "util/nearest_name.hpp"

#include <algorithm>
#include <numeric>

namespace tinct {

std::size_t edit_distance(const std::string& a, const std::string& b) {
  // Three rows of the dynamic programme: two back for the swap.
  std::vector<std::size_t> before(b.size() + 1), previous(b.size() + 1), row(b.size() + 1);
  std::iota(previous.begin(), previous.end(), 0);
  for (std::size_t i = 1; i <= a.size(); ++i) {
    row[0] = i;
    for (std::size_t j = 1; j <= b.size(); ++j) {
      const std::size_t substitution = previous[j - 1] + (a[i - 1] == b[j - 1] ? 0 : 1);
      row[j] = std::min({previous[j] + 1, row[j - 1] + 1, substitution});
      if (i > 1 && j > 1 && a[i - 1] == b[j - 2] && a[i - 2] == b[j - 1]) {
        row[j] = std::min(row[j], before[j - 2] + 1);
      }
    }
    before.swap(previous);
    previous.swap(row);
  }
  return previous[b.size()];
}

std::string nearest_name(const std::string& name, const std::vector<std::string>& candidates) {
  std::string best;
  std::size_t best_distance = std::max<std::size_t>(2, name.size() / 2) + 1;
  for (const auto& candidate : candidates) {
    const std::size_t distance = edit_distance(name, candidate);
    if (distance < best_distance) {
      best_distance = distance;
      best = candidate;
    }
  }
  return best;
}

bool likely_misspelling(const std::string& typed, const std::string& meant) {
  if (typed == meant || typed.size() < 3 || meant.size() < 3) return false;
  const std::size_t allowed = std::max(typed.size(), meant.size()) >= 8 ? 2 : 1;
  return edit_distance(typed, meant) <= allowed;
}

}  // namespace tinct
