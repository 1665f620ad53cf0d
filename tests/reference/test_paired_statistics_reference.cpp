// trainer/assess paired statistics and distribution functions against SciPy 1.10 and
// statsmodels 0.13 (Debian), on the grids and 240 random paired samples that
// make_paired_statistics_reference.py writes into $TINCT_TEST_DATA.
#include <catch2/catch.hpp>

#include <cmath>
#include <string>
#include <vector>

#include "assess/distributions.hpp"
#include "assess/holm_adjustment.hpp"
#include "assess/mcnemar.hpp"
#include "assess/paired_bootstrap.hpp"
#include "assess/paired_t_test.hpp"
#include "assess/wilcoxon_signed_rank.hpp"
#include "reference_cases.hpp"

using namespace tinct_reference;
using tinct::Alternative;
using tinct::WilcoxonMethod;

namespace {

Alternative alternative_named(const std::string& name) {
  if (name == "greater") return Alternative::greater;
  if (name == "less") return Alternative::less;
  return Alternative::two_sided;
}

// "wilcoxon:ALTERNATIVE:METHOD:CONTINUITY" -> options.
tinct::WilcoxonOptions wilcoxon_options(const std::string& field) {
  std::vector<std::string> parts;
  std::stringstream text(field);
  for (std::string part; std::getline(text, part, ':');) parts.push_back(part);
  tinct::WilcoxonOptions options;
  options.alternative = alternative_named(parts.at(1));
  options.method = parts.at(2) == "exact" ? WilcoxonMethod::exact : WilcoxonMethod::normal;
  options.continuity = parts.at(3) == "1";
  return options;
}

struct Coverage {
  int exact = 0, normal_ties = 0, zeros = 0, undefined_wilcoxon = 0, t_constant = 0;
  int bootstrap = 0, mcnemar_large = 0, mcnemar_none = 0, holm = 0;
};

void check_wilcoxon(const Fields& fields, const std::vector<double>& d, Coverage& seen) {
  if (has(fields, "wilcoxon_none")) {
    const tinct::WilcoxonResult r = tinct::wilcoxon_signed_rank(d);
    CHECK_FALSE(r.defined);
    CHECK(r.p == 1);
    ++seen.undefined_wilcoxon;
    return;
  }
  const tinct::WilcoxonResult automatic = tinct::wilcoxon_signed_rank(d);
  CHECK(tinct::wilcoxon_method_name(automatic.method) == fields.at("wilcoxon_auto").at(0));
  seen.zeros += automatic.zeros_dropped > 0;
  seen.normal_ties += automatic.ties;
  for (const auto& [field, values] : fields) {
    if (field.rfind("wilcoxon:", 0) != 0) continue;
    INFO(field);
    const tinct::WilcoxonOptions options = wilcoxon_options(field);
    const tinct::WilcoxonResult r = tinct::wilcoxon_signed_rank(d, options);
    CHECK(r.statistic == Approx(to_number(values.at(0))).margin(1e-9));
    if (options.method == WilcoxonMethod::exact) {
      ++seen.exact;
      CHECK(r.p == Approx(to_number(values.at(1))).epsilon(1e-12).margin(1e-300));
    } else {
      CHECK(r.p == Approx(to_number(values.at(1))).epsilon(1e-10).margin(1e-300));
      CHECK(r.z == Approx(to_number(values.at(2))).epsilon(1e-12).margin(1e-12));
    }
  }
}

void check_t(const Fields& fields, const std::vector<double>& d, Coverage& seen) {
  if (has(fields, "t_constant")) {
    CHECK_FALSE(tinct::paired_t_test(d).defined);
    ++seen.t_constant;
    return;
  }
  for (const char* name : {"two-sided", "greater", "less"}) {
    INFO("ttest_rel " << name);
    const std::vector<double> scipy = numbers(fields, std::string("ttest:") + name);
    const tinct::TTestResult r = tinct::paired_t_test(d, 0.95, alternative_named(name));
    CHECK(r.t == Approx(scipy[0]).epsilon(1e-10));
    CHECK(r.p == Approx(scipy[1]).epsilon(1e-9).margin(1e-300));
  }
  // SciPy 1.10's t.ppf is good to about 2e-9 relative: interval ends agree to 1e-8 of the
  // half-width (an end near 0 has no relative precision to compare).
  for (double level : {0.95, 0.9}) {
    INFO("interval at " << level);
    const std::vector<double> ci = numbers(fields, "ttest_ci:" + std::string(level == 0.95 ? "0.95" : "0.9"));
    const tinct::TTestResult r = tinct::paired_t_test(d, level);
    const double margin = 1e-8 * (ci[1] - ci[0]);
    CHECK(r.low == Approx(ci[0]).epsilon(0).margin(margin));
    CHECK(r.high == Approx(ci[1]).epsilon(0).margin(margin));
  }
  const std::vector<double> c = numbers(fields, "corrected");  // ratio, t, p, p greater, low, high
  const tinct::TTestResult two = tinct::corrected_resampled_t_test(d, c[0]);
  const tinct::TTestResult greater =
      tinct::corrected_resampled_t_test(d, c[0], 0.95, Alternative::greater);
  INFO("corrected resampled t, ratio " << c[0]);
  CHECK(two.t == Approx(c[1]).epsilon(1e-10));
  CHECK(two.p == Approx(c[2]).epsilon(1e-9).margin(1e-300));
  CHECK(greater.p == Approx(c[3]).epsilon(1e-9).margin(1e-300));
  CHECK(two.low == Approx(c[4]).epsilon(0).margin(1e-8 * (c[5] - c[4])));
  CHECK(two.high == Approx(c[5]).epsilon(0).margin(1e-8 * (c[5] - c[4])));
}

// SciPy draws other resamples: the ends agree within Monte Carlo error (about 1 % of the
// width at 10000 resamples; allowed 10 %), and both intervals hold SciPy's mean difference.
void check_bootstrap(const Fields& fields, const std::vector<double>& d, int number,
                     Coverage& seen) {
  if (!has(fields, "bootstrap")) return;
  const std::vector<double> scipy = numbers(fields, "bootstrap");  // mean, low, high
  tinct::BootstrapOptions options;
  options.seed = static_cast<std::uint64_t>(number);
  const tinct::BootstrapInterval ours = tinct::paired_bootstrap(d, options);
  const double width = scipy[2] - scipy[1];
  CHECK(ours.mean == Approx(scipy[0]).epsilon(1e-12).margin(1e-15));
  CHECK(ours.low <= scipy[0]);
  CHECK(ours.high >= scipy[0]);
  CHECK(std::fabs(ours.low - scipy[1]) <= 0.1 * width);
  CHECK(std::fabs(ours.high - scipy[2]) <= 0.1 * width);
  ++seen.bootstrap;
}

void check_mcnemar(const Fields& fields, Coverage& seen) {
  const std::vector<double> v = numbers(fields, "mcnemar");
  const tinct::McNemarResult r =
      tinct::mcnemar(static_cast<std::int64_t>(v[0]), static_cast<std::int64_t>(v[1]));
  INFO("McNemar b = " << v[0] << ", c = " << v[1]);
  if (v.size() == 2) {
    CHECK_FALSE(r.defined);
    ++seen.mcnemar_none;
    return;
  }
  seen.mcnemar_large += v[0] + v[1] > 1000;
  CHECK(r.exact_p == Approx(v[2]).epsilon(1e-11).margin(1e-300));
  CHECK(r.chi_square == Approx(v[3]).epsilon(1e-13));
  CHECK(r.chi_square_p == Approx(v[4]).epsilon(1e-11).margin(1e-300));
  CHECK(r.chi_square_corrected == Approx(v[5]).epsilon(1e-13));
  CHECK(r.chi_square_corrected_p == Approx(v[6]).epsilon(1e-11).margin(1e-300));
}

void check_holm(const Fields& fields, Coverage& seen) {
  const std::vector<double> adjusted = tinct::holm_adjust(numbers(fields, "holm_p"));
  const std::vector<double> statsmodels = numbers(fields, "holm_adjusted");
  REQUIRE(adjusted.size() == statsmodels.size());
  for (std::size_t i = 0; i < adjusted.size(); ++i)
    CHECK(adjusted[i] == Approx(statsmodels[i]).epsilon(1e-14).margin(1e-300));
  seen.holm += adjusted.size() > 1;
}

double call(const std::string& name, double a, double b, double c) {
  if (name == "betainc") return tinct::regularized_incomplete_beta(a, b, c);
  if (name == "t_sf") return tinct::student_t_sf(a, b);
  if (name == "t_cdf") return tinct::student_t_cdf(a, b);
  if (name == "t_ppf" || name == "t_ppf_newton") return tinct::student_t_quantile(a, b);
  if (name == "norm_sf") return tinct::normal_sf(a);
  if (name == "chi2_sf") return tinct::chi_square_1_sf(a);
  if (name == "binom_cdf")
    return tinct::binomial_half_cdf(static_cast<long long>(a), static_cast<long long>(b));
  FAIL("unknown function " << name << " in distributions_reference.csv");
  return 0;
}

}  // namespace

TEST_CASE("distributions reference: incomplete beta, t, normal, chi-square, binomial equal SciPy 1.10") {
  const auto rows = read_rows("distributions_reference.csv");
  REQUIRE(rows.size() > 1000);
  for (const auto& row : rows) {
    const std::string& name = row.at(0);
    const double a = to_number(row.at(1)), b = to_number(row.at(2)), c = to_number(row.at(3));
    const double scipy = to_number(row.at(4));
    INFO(name << "(" << row.at(1) << ", " << row.at(2) << ", " << row.at(3) << ") = " << row.at(4));
    // SciPy 1.10's t.ppf is good to only about 2e-9 relative (and gives 7e-17 for 0.5);
    // polished by Newton steps on its t.cdf it must agree to rounding, like everything else.
    const double tolerance = name == "t_ppf" ? 1e-8 : 1e-11;
    const double margin = name.rfind("t_ppf", 0) == 0 ? 1e-15 : 1e-300;
    CHECK(call(name, a, b, c) == Approx(scipy).epsilon(tolerance).margin(margin));
  }
}

TEST_CASE("paired statistics reference: 240 random samples equal SciPy 1.10 and statsmodels 0.13") {
  const std::map<int, Fields> cases = read_cases("paired_statistics_reference.csv");
  REQUIRE(cases.size() == 240);
  Coverage seen;
  for (const auto& [number, fields] : cases) {
    INFO("case " << number << " of paired_statistics_reference.csv");
    const std::vector<double> d = numbers(fields, "differences");
    check_wilcoxon(fields, d, seen);
    check_t(fields, d, seen);
    check_bootstrap(fields, d, number, seen);
    check_mcnemar(fields, seen);
    check_holm(fields, seen);
  }
  INFO("exact Wilcoxon " << seen.exact << ", with ties " << seen.normal_ties << ", with zeros "
       << seen.zeros << ", all zero " << seen.undefined_wilcoxon << ", constant t "
       << seen.t_constant << ", bootstrap " << seen.bootstrap << ", McNemar n > 1000 "
       << seen.mcnemar_large << ", McNemar none " << seen.mcnemar_none << ", Holm " << seen.holm);
  CHECK(seen.exact >= 150);
  CHECK(seen.normal_ties >= 50);
  CHECK(seen.zeros >= 50);
  CHECK(seen.bootstrap >= 70);
  CHECK(seen.mcnemar_large >= 20);
  CHECK(seen.holm >= 150);
}
