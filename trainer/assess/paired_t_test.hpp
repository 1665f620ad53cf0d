// t tests on paired differences and the t interval of their mean: the ordinary paired t test
// (SciPy's ttest_rel) and the corrected resampled t test of Nadeau and Bengio (2003) for
// designs where runs share training data (k folds x r repeats), whose differences are
// correlated and make the ordinary test far too confident.
#pragma once

#include <vector>

#include "assess/alternative.hpp"

namespace tinct {

struct TTestResult {
  int n = 0;
  double mean = 0, sd = 0;      // of the differences; sd with n - 1
  double standard_error = 0;    // of the mean, after any variance correction
  double t = 0, df = 0, p = 1;  // p for the alternative asked for
  double level = 0.95, low = 0, high = 0;  // two-sided interval of the mean at level
  // False when every difference is the same (sd = 0): t = 0, p = 1 and the interval is
  // [mean, mean]; a report should say "undefined (no variation)" rather than a p.
  bool defined = false;
};

// Paired t test: t = mean / (sd / sqrt(n)), df = n - 1; interval mean +- t(1 - (1-level)/2)
// x sd / sqrt(n). Needs n >= 2 finite differences and level in (0, 1), else tinct::Error.
TTestResult paired_t_test(const std::vector<double>& differences, double level = 0.95,
                          Alternative alternative = Alternative::two_sided);

// Corrected resampled t test (Nadeau and Bengio 2003; its use for r x k-fold designs,
// Bouckaert and Frank 2004, from memory): the J = k r differences of runs over repeated fold
// partitions, variance of the mean (1/J + n_test/n_train) sd^2 instead of sd^2 / J, df = J - 1.
// test_train_ratio is n_test / n_train of one run (k-fold without a label budget: 1/(k - 1)).
TTestResult corrected_resampled_t_test(const std::vector<double>& differences,
                                       double test_train_ratio, double level = 0.95,
                                       Alternative alternative = Alternative::two_sided);

}  // namespace tinct
