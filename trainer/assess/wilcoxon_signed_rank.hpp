// Wilcoxon's signed-rank test on paired differences (for example one macro F1 difference per
// seed and fold): do the differences lean to one side? Zeros are dropped (zero_method "wilcox").
// Small samples without ties get the exact null distribution; otherwise the normal
// approximation with the tie correction of the variance and an optional continuity correction.
#pragma once

#include <string>
#include <vector>

#include "assess/alternative.hpp"

namespace tinct {

enum class WilcoxonMethod { automatic, exact, normal };

struct WilcoxonOptions {
  Alternative alternative = Alternative::two_sided;  // greater: the differences lean positive
  WilcoxonMethod method = WilcoxonMethod::automatic;
  bool continuity = false;   // normal method only: move the statistic 0.5 towards the mean
  int exact_limit = 50;      // automatic: exact when n used <= this and no tied |d|
};

struct WilcoxonResult {
  double w_plus = 0, w_minus = 0;  // rank sums of the positive and negative differences
  // SciPy's statistic: min(W+, W-) two-sided, W+ one-sided.
  double statistic = 0;
  double p = 1;
  double z = 0;                    // normal method only, as SciPy's zstatistic
  int n_used = 0;                  // non-zero differences
  int zeros_dropped = 0;
  // Some |d| are equal (mid-ranks used). Equality is exact, as in SciPy: differences of
  // metrics computed from counts (0.85 - 0.83 against 0.02 - 0.0) may miss by an ulp, so
  // round them (say to 1e-9) first if they should tie.
  bool ties = false;
  WilcoxonMethod method = WilcoxonMethod::normal;  // the one used: exact or normal
  bool defined = false;            // false when every difference is 0: p = 1, nothing tested
};

// automatic picks exact for n used <= exact_limit without ties, else normal. Unlike SciPy
// 1.10's "auto" (which counts zeros and then switches to normal), zeros are dropped first, so
// the exact test is the conditional one on the non-zero differences. Forcing exact with tied
// |d| or more than 1000 differences throws tinct::Error (usage). Non-finite input throws.
WilcoxonResult wilcoxon_signed_rank(const std::vector<double>& differences,
                                    const WilcoxonOptions& options = {});

std::string wilcoxon_method_name(WilcoxonMethod method);  // "automatic", "exact", "normal"

}  // namespace tinct
