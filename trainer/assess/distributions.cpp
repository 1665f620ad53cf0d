// The incomplete beta function carries everything: t tails are I_x(df/2, 1/2) with
// x = df / (df + t^2), binomial sums are I_{1/2}(n - k, k + 1). Arguments are passed as x and
// y = 1 - x, each computed without cancellation, so small tails keep their relative accuracy.
#include "assess/distributions.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <string>

#include "util/error.hpp"

namespace tinct {
namespace {

constexpr int kMaxFractionTerms = 10000;
constexpr double kFractionEpsilon = 1e-16;
constexpr double kTiny = 1e-300;  // keeps Lentz's denominators away from zero

double not_tiny(double v) { return std::fabs(v) < kTiny ? kTiny : v; }

// The continued fraction of I_x(a, b), modified Lentz; converges fast for x < (a+1)/(a+b+2).
double beta_fraction(double a, double b, double x) {
  double c = 1;
  double d = 1 / not_tiny(1 - (a + b) * x / (a + 1));
  double h = d;
  for (int m = 1; m <= kMaxFractionTerms; ++m) {
    const double m2 = 2.0 * m;
    double aa = m * (b - m) * x / ((a - 1 + m2) * (a + m2));  // even step
    d = 1 / not_tiny(1 + aa * d);
    c = not_tiny(1 + aa / c);
    h *= d * c;
    aa = -(a + m) * (a + b + m) * x / ((a + m2) * (a + 1 + m2));  // odd step
    d = 1 / not_tiny(1 + aa * d);
    c = not_tiny(1 + aa / c);
    const double step = d * c;
    h *= step;
    if (std::fabs(step - 1) < kFractionEpsilon) return h;
  }
  fail_runtime("incomplete beta: continued fraction did not converge for a = " +
               std::to_string(a) + ", b = " + std::to_string(b) + ", x = " + std::to_string(x));
}

// Stirling's series for log Gamma(x) - ((x - 1/2) log x - x + log(2 pi) / 2), x >= 10:
// the next term is below 2e-14.
double stirling_correction(double x) {
  const double x2 = x * x;
  return (1.0 / 12 - (1.0 / 360 - (1.0 / 1260 - (1.0 / 1680 - 1.0 / (1188 * x2)) / x2) / x2) / x2) / x;
}

// log B(a, b). For a large parameter, log Gamma(big) - log Gamma(big + small) is taken from
// Stirling's series without subtracting two large logarithms (which loses ~1e-10 at 1e5).
double log_beta(double a, double b) {
  const double small = std::min(a, b), big = std::max(a, b);
  if (big < 10) return std::lgamma(a) + std::lgamma(b) - std::lgamma(a + b);
  const double difference = -(big - 0.5) * std::log1p(small / big) - small * std::log(big + small) +
                            small + stirling_correction(big) - stirling_correction(big + small);
  return std::lgamma(small) + difference;
}

// log of v, given 1 - v as well: log1p where v is near 1.
double log_of(double v, double one_minus_v) { return v < 0.5 ? std::log(v) : std::log1p(-one_minus_v); }

// I_x(a, b) given x and y = 1 - x separately.
double incomplete_beta(double a, double b, double x, double y) {
  if (x <= 0) return 0;
  if (y <= 0) return 1;
  const double log_front = a * log_of(x, y) + b * log_of(y, x) - log_beta(a, b);
  if (x < (a + 1) / (a + b + 2)) return std::exp(log_front) * beta_fraction(a, b, x) / a;
  return 1 - std::exp(log_front) * beta_fraction(b, a, y) / b;
}

void check_df(double df, const char* where) {
  if (!(df > 0)) fail_usage(std::string(where) + ": degrees of freedom must be > 0, got " +
                            std::to_string(df));
}

// P(T > |t|), half the two-sided tail.
double t_upper_tail(double t, double df) {
  if (std::isinf(t)) return 0;
  const double t2 = t * t;
  return 0.5 * incomplete_beta(df / 2, 0.5, df / (df + t2), t2 / (df + t2));
}

}  // namespace

double regularized_incomplete_beta(double a, double b, double x) {
  if (!(a > 0) || !(b > 0) || !(x >= 0 && x <= 1))
    fail_usage("incomplete beta: needs a, b > 0 and x in [0, 1], got a = " + std::to_string(a) +
               ", b = " + std::to_string(b) + ", x = " + std::to_string(x));
  return incomplete_beta(a, b, x, 1 - x);
}

double student_t_sf(double t, double df) {
  check_df(df, "student_t_sf");
  if (std::isnan(t)) return t;
  const double tail = t_upper_tail(t, df);
  return t > 0 ? tail : 1 - tail;
}

double student_t_cdf(double t, double df) {
  check_df(df, "student_t_cdf");
  if (std::isnan(t)) return t;
  const double tail = t_upper_tail(t, df);
  return t < 0 ? tail : 1 - tail;
}

double student_t_quantile(double probability, double df) {
  check_df(df, "student_t_quantile");
  if (!(probability > 0 && probability < 1))
    fail_usage("student_t_quantile: probability must be in (0, 1), got " +
               std::to_string(probability));
  if (probability == 0.5) return 0;
  // Find t > 0 with upper tail = the smaller tail probability, then give it the sign.
  const double tail = probability < 0.5 ? probability : 1 - probability;
  double low = 0, high = 1;
  while (t_upper_tail(high, df) > tail) {
    low = high;
    high *= 2;
    if (std::isinf(high)) return probability < 0.5 ? -high : high;
  }
  for (int i = 0; i < 2000; ++i) {
    const double mid = low + (high - low) / 2;
    if (mid <= low || mid >= high) break;  // adjacent doubles: done
    (t_upper_tail(mid, df) > tail ? low : high) = mid;
  }
  const double t = low + (high - low) / 2;
  return probability < 0.5 ? -t : t;
}

double normal_cdf(double z) { return 0.5 * std::erfc(-z / std::sqrt(2.0)); }

double normal_sf(double z) { return 0.5 * std::erfc(z / std::sqrt(2.0)); }

double chi_square_1_sf(double x) { return x <= 0 ? 1.0 : std::erfc(std::sqrt(x / 2)); }

double binomial_half_cdf(long long k, long long n) {
  if (n < 0) fail_usage("binomial_half_cdf: n must be >= 0, got " + std::to_string(n));
  if (k < 0) return 0;
  if (k >= n) return 1;
  return incomplete_beta(static_cast<double>(n - k), static_cast<double>(k + 1), 0.5, 0.5);
}

}  // namespace tinct
