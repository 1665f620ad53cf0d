// Both tests share everything but the variance of the mean: mean and sd by two passes in
// double, t against Student's t with n - 1 degrees of freedom, interval from its quantile.
#include "assess/paired_t_test.hpp"

#include <cmath>
#include <string>

#include "assess/distributions.hpp"
#include "util/error.hpp"

namespace tinct {
namespace {

void check_input(const std::vector<double>& differences, double level, const char* test) {
  if (differences.size() < 2)
    fail_usage(std::string(test) + ": needs at least 2 paired differences, got " +
               std::to_string(differences.size()));
  if (!(level > 0 && level < 1))
    fail_usage(std::string(test) + ": level must be in (0, 1), got " + std::to_string(level));
  for (std::size_t i = 0; i < differences.size(); ++i)
    if (!std::isfinite(differences[i]))
      fail_runtime(std::string(test) + ": difference " + std::to_string(i) + " is not finite");
}

double p_value(double t, double df, Alternative alternative) {
  if (alternative == Alternative::greater) return student_t_sf(t, df);
  if (alternative == Alternative::less) return student_t_cdf(t, df);
  return std::fmin(1.0, 2 * student_t_sf(std::fabs(t), df));
}

// variance_factor: the variance of the mean is variance_factor x sd^2.
TTestResult t_test(const std::vector<double>& differences, double variance_factor, double level,
                   Alternative alternative) {
  TTestResult r;
  r.n = static_cast<int>(differences.size());
  r.df = r.n - 1;
  r.level = level;
  double sum = 0;
  for (double d : differences) sum += d;
  r.mean = sum / r.n;
  double squares = 0;
  for (double d : differences) squares += (d - r.mean) * (d - r.mean);
  r.sd = std::sqrt(squares / r.df);
  r.standard_error = std::sqrt(variance_factor) * r.sd;
  r.low = r.high = r.mean;
  if (r.standard_error == 0) return r;
  r.defined = true;
  r.t = r.mean / r.standard_error;
  r.p = p_value(r.t, r.df, alternative);
  const double half_width = student_t_quantile(1 - (1 - level) / 2, r.df) * r.standard_error;
  r.low = r.mean - half_width;
  r.high = r.mean + half_width;
  return r;
}

}  // namespace

TTestResult paired_t_test(const std::vector<double>& differences, double level,
                          Alternative alternative) {
  check_input(differences, level, "paired t test");
  return t_test(differences, 1.0 / static_cast<double>(differences.size()), level, alternative);
}

TTestResult corrected_resampled_t_test(const std::vector<double>& differences,
                                       double test_train_ratio, double level,
                                       Alternative alternative) {
  check_input(differences, level, "corrected resampled t test");
  if (!(test_train_ratio >= 0) || !std::isfinite(test_train_ratio))
    fail_usage("corrected resampled t test: test_train_ratio (n_test / n_train) must be >= 0, "
               "got " + std::to_string(test_train_ratio));
  const double factor = 1.0 / static_cast<double>(differences.size()) + test_train_ratio;
  return t_test(differences, factor, level, alternative);
}

}  // namespace tinct
