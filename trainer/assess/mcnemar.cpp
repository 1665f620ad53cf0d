// Exact p = min(1, 2 P(X <= min(b, c))) for X binomial(b + c, 1/2): for p = 1/2 the outcomes
// at least as unlikely as the observed one are the two tails of equal size, which is what
// SciPy's binomtest sums. Chi-square tails use one degree of freedom.
#include "assess/mcnemar.hpp"

#include <algorithm>
#include <cmath>
#include <string>

#include "assess/distributions.hpp"
#include "util/error.hpp"

namespace tinct {

McNemarResult mcnemar(std::int64_t b, std::int64_t c) {
  if (b < 0 || c < 0)
    fail_usage("mcnemar: counts must be >= 0, got b = " + std::to_string(b) +
               ", c = " + std::to_string(c));
  McNemarResult result;
  result.b = b;
  result.c = c;
  const std::int64_t n = b + c;
  if (n == 0) return result;
  result.defined = true;
  const double low_tail = binomial_half_cdf(std::min(b, c), n);
  result.exact_p = b == c ? 1.0 : std::min(1.0, 2 * low_tail);
  const double difference = static_cast<double>(b - c);
  result.chi_square = difference * difference / static_cast<double>(n);
  result.chi_square_p = chi_square_1_sf(result.chi_square);
  const double corrected = std::fabs(difference) - 1;
  result.chi_square_corrected = corrected * corrected / static_cast<double>(n);
  result.chi_square_corrected_p = chi_square_1_sf(result.chi_square_corrected);
  return result;
}

DiscordantCounts discordant_counts(const std::vector<int>& truth, const std::vector<int>& first,
                                   const std::vector<int>& second) {
  if (first.size() != truth.size() || second.size() != truth.size())
    fail_runtime("mcnemar: " + std::to_string(truth.size()) + " true labels but " +
                 std::to_string(first.size()) + " and " + std::to_string(second.size()) +
                 " predictions: both classifiers must score the same chips");
  DiscordantCounts counts;
  for (std::size_t i = 0; i < truth.size(); ++i) {
    const bool first_right = first[i] == truth[i], second_right = second[i] == truth[i];
    counts.b += first_right && !second_right;
    counts.c += !first_right && second_right;
  }
  return counts;
}

}  // namespace tinct
