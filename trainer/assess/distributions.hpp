// Distribution functions the paired tests need: the regularised incomplete beta function,
// Student's t (CDF, survival function, quantile), the standard normal and the chi-square
// tail with one degree of freedom. Double precision throughout; checked against SciPy 1.10.
#pragma once

namespace tinct {

// I_x(a, b) for a, b > 0 and x in [0, 1]: the continued fraction of the incomplete beta
// function by the modified Lentz method (Press et al., Numerical Recipes, from memory),
// relative accuracy about 1e-14. Throws tinct::Error outside the domain.
double regularized_incomplete_beta(double a, double b, double x);

// Student's t with df > 0 degrees of freedom (df need not be an integer).
double student_t_cdf(double t, double df);
double student_t_sf(double t, double df);  // 1 - cdf, accurate in the upper tail
// The t with cdf(t) = probability, for probability in (0, 1); bisection to full precision.
double student_t_quantile(double probability, double df);

double normal_cdf(double z);
double normal_sf(double z);  // 1 - cdf, accurate in the upper tail

// P(X > x) for X chi-square with one degree of freedom (= erfc(sqrt(x / 2))); 1 for x <= 0.
double chi_square_1_sf(double x);

// P(X <= k) for X binomial(n, 1/2), from I_{1/2}(n - k, k + 1); exact to rounding.
double binomial_half_cdf(long long k, long long n);

}  // namespace tinct
