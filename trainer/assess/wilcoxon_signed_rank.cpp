// Ranks of |d| with mid-ranks for ties (as SciPy's rankdata "average"). The exact null
// distribution of W+ is the distribution of subset sums of 1..n, built by one pass per rank in
// probabilities (exact binary fractions for n <= 53). Normal approximation: mean n(n+1)/4,
// variance (n(n+1)(2n+1) - sum over tie groups t(t^2 - 1) / 2) / 24, as SciPy 1.10.
#include "assess/wilcoxon_signed_rank.hpp"

#include <algorithm>
#include <cmath>
#include <numeric>

#include "assess/distributions.hpp"
#include "util/error.hpp"

namespace tinct {
namespace {

constexpr int kExactHardLimit = 1000;

struct Ranked {
  std::vector<double> values;  // non-zero differences
  std::vector<double> ranks;   // of |value|, mid-ranks
  double tie_term = 0;         // sum over tie groups of t (t^2 - 1)
};

Ranked rank_nonzero(const std::vector<double>& differences) {
  Ranked ranked;
  for (std::size_t i = 0; i < differences.size(); ++i) {
    if (!std::isfinite(differences[i]))
      fail_runtime("wilcoxon: difference " + std::to_string(i) + " is not finite (" +
                   std::to_string(differences[i]) + ")");
    if (differences[i] != 0) ranked.values.push_back(differences[i]);
  }
  const std::size_t n = ranked.values.size();
  std::vector<std::size_t> order(n);
  std::iota(order.begin(), order.end(), 0);
  std::sort(order.begin(), order.end(), [&](std::size_t a, std::size_t b) {
    return std::fabs(ranked.values[a]) < std::fabs(ranked.values[b]);
  });
  ranked.ranks.assign(n, 0);
  for (std::size_t start = 0; start < n;) {
    std::size_t end = start + 1;
    while (end < n && std::fabs(ranked.values[order[end]]) == std::fabs(ranked.values[order[start]]))
      ++end;
    const double mid_rank = (start + 1 + end) / 2.0;  // ranks start+1 .. end
    for (std::size_t k = start; k < end; ++k) ranked.ranks[order[k]] = mid_rank;
    const double t = static_cast<double>(end - start);
    ranked.tie_term += t * (t * t - 1);
    start = end;
  }
  return ranked;
}

// P(W+ = w) for w = 0 .. n(n+1)/2 under the null hypothesis.
std::vector<double> exact_distribution(int n) {
  std::vector<double> p(static_cast<std::size_t>(n) * (n + 1) / 2 + 1, 0.0);
  p[0] = 1;
  int top = 0;
  for (int rank = 1; rank <= n; ++rank) {
    top += rank;
    for (int w = top; w >= 0; --w) p[w] = 0.5 * (p[w] + (w >= rank ? p[w - rank] : 0.0));
  }
  return p;
}

double exact_p(const WilcoxonResult& r, Alternative alternative) {
  const std::vector<double> pmf = exact_distribution(r.n_used);
  const int w = static_cast<int>(std::lround(r.w_plus));
  double at_most = 0, at_least = 0;
  for (int k = 0; k <= w; ++k) at_most += pmf[k];
  for (std::size_t k = w; k < pmf.size(); ++k) at_least += pmf[k];
  if (alternative == Alternative::greater) return std::min(1.0, at_least);
  if (alternative == Alternative::less) return std::min(1.0, at_most);
  return std::min(1.0, 2 * std::min(at_most, at_least));
}

void normal_p(WilcoxonResult& r, const Ranked& ranked, const WilcoxonOptions& options) {
  const double n = r.n_used;
  const double mean = n * (n + 1) / 4;
  const double sd = std::sqrt((n * (n + 1) * (2 * n + 1) - 0.5 * ranked.tie_term) / 24);
  double shift = 0;
  if (options.continuity) {
    if (options.alternative == Alternative::two_sided)
      shift = 0.5 * ((r.statistic > mean) - (r.statistic < mean));
    else
      shift = options.alternative == Alternative::greater ? 0.5 : -0.5;
  }
  r.z = (r.statistic - mean - shift) / sd;
  if (options.alternative == Alternative::greater) r.p = normal_sf(r.z);
  else if (options.alternative == Alternative::less) r.p = normal_cdf(r.z);
  else r.p = std::min(1.0, 2 * normal_sf(std::fabs(r.z)));
}

WilcoxonMethod choose_method(const WilcoxonResult& r, const WilcoxonOptions& options) {
  if (options.method == WilcoxonMethod::automatic)
    return !r.ties && r.n_used <= options.exact_limit ? WilcoxonMethod::exact
                                                      : WilcoxonMethod::normal;
  if (options.method == WilcoxonMethod::exact && r.ties)
    fail_usage("wilcoxon: the exact method needs distinct |differences|; these have ties: "
               "use the normal method (or automatic)");
  if (options.method == WilcoxonMethod::exact && r.n_used > kExactHardLimit)
    fail_usage("wilcoxon: the exact method is limited to " + std::to_string(kExactHardLimit) +
               " differences, got " + std::to_string(r.n_used) + ": use the normal method");
  return options.method;
}

}  // namespace

WilcoxonResult wilcoxon_signed_rank(const std::vector<double>& differences,
                                    const WilcoxonOptions& options) {
  const Ranked ranked = rank_nonzero(differences);
  WilcoxonResult r;
  r.n_used = static_cast<int>(ranked.values.size());
  r.zeros_dropped = static_cast<int>(differences.size()) - r.n_used;
  r.ties = ranked.tie_term > 0;
  for (std::size_t i = 0; i < ranked.values.size(); ++i)
    (ranked.values[i] > 0 ? r.w_plus : r.w_minus) += ranked.ranks[i];
  r.statistic = options.alternative == Alternative::two_sided ? std::min(r.w_plus, r.w_minus)
                                                              : r.w_plus;
  r.method = choose_method(r, options);
  if (r.n_used == 0) return r;  // nothing to test: p = 1, defined = false
  r.defined = true;
  if (r.method == WilcoxonMethod::exact) r.p = exact_p(r, options.alternative);
  else normal_p(r, ranked, options);
  return r;
}

std::string wilcoxon_method_name(WilcoxonMethod method) {
  switch (method) {
    case WilcoxonMethod::exact: return "exact";
    case WilcoxonMethod::normal: return "normal";
    default: return "automatic";
  }
}

}  // namespace tinct
