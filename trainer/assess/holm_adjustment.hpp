// Holm's (1979) step-down adjustment for several comparisons made at once (for example each
// arm against scratch): controls the family-wise error rate without assuming independence,
// and is never less powerful than Bonferroni.
#pragma once

#include <vector>

namespace tinct {

// Adjusted p values in the input's order: with p sorted ascending p_(1) <= ... <= p_(m),
// adjusted p_(i) = max over j <= i of min(1, (m - j + 1) p_(j)). Equal p values keep their
// order of input. Throws tinct::Error on values outside [0, 1].
std::vector<double> holm_adjust(const std::vector<double>& p_values);

}  // namespace tinct
