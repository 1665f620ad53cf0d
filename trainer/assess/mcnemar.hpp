// McNemar's test for two classifiers scored on the same test chips: only the discordant chips
// count, b = first right and second wrong, c = first wrong and second right. The exact test
// is the two-sided binomial test of b out of b + c at 1/2; the chi-square forms with and
// without continuity correction are given beside it for comparison with other reports.
#pragma once

#include <cstdint>
#include <vector>

namespace tinct {

struct McNemarResult {
  std::int64_t b = 0, c = 0;
  double exact_p = 1;                 // two-sided binomial (SciPy's binomtest(b, b + c, 0.5))
  double chi_square = 0, chi_square_p = 1;  // (b - c)^2 / (b + c), one degree of freedom
  // (|b - c| - 1)^2 / (b + c) as written (b = c gives 1 / (b + c), not 0).
  double chi_square_corrected = 0, chi_square_corrected_p = 1;
  // False when b + c = 0: the classifiers never disagree, there is nothing to test; every p
  // is then 1 and a report should say "undefined (no discordant chips)" rather than a p.
  bool defined = false;
};

McNemarResult mcnemar(std::int64_t b, std::int64_t c);

struct DiscordantCounts {
  std::int64_t b = 0, c = 0;  // first right only, second right only
};

// Counts b and c from class indices of the same N chips; throws tinct::Error on sizes that
// differ.
DiscordantCounts discordant_counts(const std::vector<int>& truth, const std::vector<int>& first,
                                   const std::vector<int>& second);

}  // namespace tinct
