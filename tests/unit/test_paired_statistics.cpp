// trainer/assess paired statistics against the worked examples of REFERENCES.md section 4
// (McNemar, Wilcoxon, paired t; computed with SciPy 1.10.1, named beside each value), Holm's
// adjustment on a worked example, and the stated rules for undefined cases. The comparison
// with SciPy on random cases is tests/reference/test_paired_statistics_reference.cpp.
#include <catch2/catch.hpp>

#include <cmath>
#include <vector>

#include "assess/holm_adjustment.hpp"
#include "assess/mcnemar.hpp"
#include "assess/paired_bootstrap.hpp"
#include "assess/paired_t_test.hpp"
#include "assess/wilcoxon_signed_rank.hpp"
#include "util/error.hpp"

using Catch::Matchers::WithinAbs;
using Catch::Matchers::WithinRel;
using tinct::Alternative;
using tinct::WilcoxonMethod;

namespace {

constexpr double kTight = 1e-12;

// REFERENCES.md section 4: paired F1 differences d (distinct |d|) and d2 (a zero and ties).
const std::vector<double> kD = {0.057, 0.013, 0.041, -0.006, 0.054,
                                0.016, 0.043, 0.029, 0.032, -0.002};
const std::vector<double> kD2 = {0.02, -0.01, 0.03, 0.0, 0.01, 0.04, 0.02, -0.03, 0.05, 0.01};

tinct::WilcoxonResult wilcoxon(const std::vector<double>& d, WilcoxonMethod method,
                               Alternative alternative = Alternative::two_sided,
                               bool continuity = false) {
  tinct::WilcoxonOptions options;
  options.method = method;
  options.alternative = alternative;
  options.continuity = continuity;
  return tinct::wilcoxon_signed_rank(d, options);
}

}  // namespace

TEST_CASE("McNemar: REFERENCES.md section 4 table, SciPy 1.10.1 binomtest and chi2.sf") {
  struct Row {
    int b, c;
    double exact_p, corrected, corrected_p, plain, plain_p;
  };
  // Source: REFERENCES.md section 4, computed with scipy 1.10.1.
  const Row rows[] = {
      {12, 4, 0.076812744140625, 3.0625, 0.08011831372763421, 4.0, 0.04550026389635857},
      {3, 15, 0.007537841796875, 6.722222222222222, 0.009521891184098848, 8.0, 0.004677734981047276},
      {5, 5, 1.0, 0.1, 0.7518296340458492, 0.0, 1.0},
      {1, 0, 1.0, 0.0, 1.0, 1.0, 0.31731050786291115}};
  for (const Row& row : rows) {
    INFO("b = " << row.b << ", c = " << row.c);
    const tinct::McNemarResult r = tinct::mcnemar(row.b, row.c);
    CHECK(r.defined);
    CHECK_THAT(r.exact_p, WithinRel(row.exact_p, kTight));
    CHECK_THAT(r.chi_square_corrected, WithinAbs(row.corrected, kTight));
    CHECK_THAT(r.chi_square_corrected_p, WithinRel(row.corrected_p, 1e-12));
    CHECK_THAT(r.chi_square, WithinAbs(row.plain, kTight));
    CHECK_THAT(r.chi_square_p, WithinRel(row.plain_p, 1e-12));
  }
  // (12, 4): 5034/65536 (REFERENCES.md section 4), to rounding.
  CHECK_THAT(tinct::mcnemar(12, 4).exact_p, WithinRel(5034.0 / 65536.0, 1e-14));
}

TEST_CASE("McNemar: no discordant chips is undefined with p = 1 (common practice)") {
  const tinct::McNemarResult r = tinct::mcnemar(0, 0);
  CHECK_FALSE(r.defined);
  CHECK(r.exact_p == 1);
  CHECK(r.chi_square_p == 1);
  CHECK(r.chi_square_corrected_p == 1);
  CHECK_THROWS_AS(tinct::mcnemar(-1, 3), tinct::Error);
}

TEST_CASE("McNemar: discordant counts from two classifiers' predictions") {
  const std::vector<int> truth = {0, 1, 2, 1, 0, 2, 2};
  const std::vector<int> first = {0, 1, 0, 1, 1, 2, 2};   // right on 0, 1, 3, 5, 6
  const std::vector<int> second = {0, 0, 2, 2, 0, 2, 1};  // right on 0, 2, 4, 5
  const tinct::DiscordantCounts counts = tinct::discordant_counts(truth, first, second);
  CHECK(counts.b == 3);  // chips 1, 3, 6
  CHECK(counts.c == 2);  // chips 2, 4
  CHECK_THROWS_AS(tinct::discordant_counts(truth, first, {0, 1}), tinct::Error);
}

TEST_CASE("Wilcoxon: REFERENCES.md section 4 differences d, exact and normal") {
  // Source for every value: REFERENCES.md section 4, computed with scipy 1.10.1.
  const tinct::WilcoxonResult exact = tinct::wilcoxon_signed_rank(kD);
  CHECK(exact.method == WilcoxonMethod::exact);  // automatic: n = 10, no ties
  CHECK(exact.w_plus == 52);
  CHECK(exact.w_minus == 3);
  CHECK(exact.statistic == 3);
  CHECK(exact.n_used == 10);
  CHECK_FALSE(exact.ties);
  CHECK(exact.p == 10.0 / 1024.0);  // 0.009765625
  const auto greater = wilcoxon(kD, WilcoxonMethod::automatic, Alternative::greater);
  CHECK(greater.statistic == 52);  // one-sided: W+
  CHECK(greater.p == 0.0048828125);

  const auto normal = wilcoxon(kD, WilcoxonMethod::normal);
  CHECK(normal.method == WilcoxonMethod::normal);
  CHECK_THAT(normal.p, WithinRel(0.012515318690073973, 1e-12));
  const auto corrected = wilcoxon(kD, WilcoxonMethod::normal, Alternative::two_sided, true);
  CHECK_THAT(corrected.p, WithinRel(0.014432823938841786, 1e-12));
}

TEST_CASE("Wilcoxon: REFERENCES.md section 4 d2, zero dropped and tie-corrected normal") {
  // Source: REFERENCES.md section 4 (scipy 1.10.1): n = 9, W+ = 36.5, W- = 8.5, variance 70.5.
  const tinct::WilcoxonResult r = tinct::wilcoxon_signed_rank(kD2);
  CHECK(r.n_used == 9);
  CHECK(r.zeros_dropped == 1);
  CHECK(r.ties);
  CHECK(r.method == WilcoxonMethod::normal);  // ties: automatic goes normal
  CHECK(r.w_plus == 36.5);
  CHECK(r.w_minus == 8.5);
  CHECK_THAT(r.z, WithinRel((8.5 - 22.5) / std::sqrt(70.5), 1e-12));  // mean 9 x 10 / 4
  CHECK_THAT(r.p, WithinRel(0.09543971556742788, 1e-12));
  CHECK_THROWS_AS(wilcoxon(kD2, WilcoxonMethod::exact), tinct::Error);
}

TEST_CASE("Wilcoxon: all differences zero is undefined with p = 1") {
  const tinct::WilcoxonResult r = tinct::wilcoxon_signed_rank({0.0, 0.0, 0.0});
  CHECK_FALSE(r.defined);
  CHECK(r.p == 1);
  CHECK(r.zeros_dropped == 3);
  CHECK_THROWS_AS(tinct::wilcoxon_signed_rank({0.1, NAN}), tinct::Error);
}

TEST_CASE("Paired t: REFERENCES.md section 4, SciPy 1.10.1 ttest_rel and t.ppf") {
  // Source for every value: REFERENCES.md section 4, computed with scipy 1.10.1.
  const tinct::TTestResult r = tinct::paired_t_test(kD);
  CHECK(r.defined);
  CHECK(r.n == 10);
  CHECK(r.df == 9);
  CHECK_THAT(r.mean, WithinRel(0.0277, 1e-12));
  CHECK_THAT(r.sd, WithinRel(0.021990149309785656, 1e-12));
  CHECK_THAT(r.t, WithinRel(3.983378646168816, 1e-12));
  CHECK_THAT(r.p, WithinRel(0.0031894724342068892, 1e-10));
  // SciPy's t.ppf is itself good to about 1e-10: its own t.sf at t.ppf(0.975, 9) is
  // 0.0250000000023 (computed, scipy 1.10.1); tinct's quantile inverts the sf to rounding.
  CHECK_THAT(r.low, WithinRel(0.011969194828316643, 1e-9));
  CHECK_THAT(r.high, WithinRel(0.043430805171683365, 1e-9));
  const tinct::TTestResult greater = tinct::paired_t_test(kD, 0.95, Alternative::greater);
  CHECK_THAT(greater.p, WithinRel(0.0031894724342068892 / 2, 1e-10));  // symmetric t
}

TEST_CASE("Corrected resampled t: variance inflated by 1/J + n_test/n_train") {
  // Arithmetic from the definition (Nadeau and Bengio 2003, from memory): with ratio 0 the
  // test is the ordinary paired t test; for 5 folds (ratio 1/4) and J = 10 the standard error
  // grows by sqrt((1/10 + 1/4) / (1/10)) = sqrt(3.5) and t shrinks by the same factor.
  const tinct::TTestResult plain = tinct::paired_t_test(kD);
  const tinct::TTestResult none = tinct::corrected_resampled_t_test(kD, 0.0);
  CHECK_THAT(none.t, WithinRel(plain.t, 1e-14));
  CHECK_THAT(none.p, WithinRel(plain.p, 1e-14));
  const tinct::TTestResult folds5 = tinct::corrected_resampled_t_test(kD, 0.25);
  CHECK_THAT(folds5.t, WithinRel(3.983378646168816 / std::sqrt(3.5), 1e-12));
  CHECK_THAT(folds5.standard_error, WithinRel(plain.standard_error * std::sqrt(3.5), 1e-12));
  CHECK(folds5.df == 9);
  CHECK(folds5.p > plain.p);
  CHECK(folds5.high - folds5.low > plain.high - plain.low);
  CHECK_THROWS_AS(tinct::corrected_resampled_t_test(kD, -0.1), tinct::Error);
}

TEST_CASE("Paired t: no variation is undefined, fewer than two differences refused") {
  const tinct::TTestResult r = tinct::paired_t_test({0.02, 0.02, 0.02});
  CHECK_FALSE(r.defined);
  CHECK(r.p == 1);
  CHECK(r.low == r.mean);
  CHECK(r.high == r.mean);
  CHECK_THROWS_AS(tinct::paired_t_test({0.1}), tinct::Error);
  CHECK_THROWS_AS(tinct::paired_t_test(kD, 1.0), tinct::Error);
}

TEST_CASE("Holm: worked example, by hand and statsmodels 0.13.5 multipletests") {
  // p = 0.01, 0.04, 0.03, 0.005 (m = 4). Sorted: 0.005 x 4 = 0.02, 0.01 x 3 = 0.03,
  // 0.03 x 2 = 0.06, 0.04 x 1 = 0.04 -> running maximum 0.06. Arithmetic; statsmodels
  // multipletests(method="holm") prints [0.03, 0.06, 0.06, 0.02].
  const std::vector<double> adjusted = tinct::holm_adjust({0.01, 0.04, 0.03, 0.005});
  REQUIRE(adjusted.size() == 4);
  CHECK_THAT(adjusted[0], WithinAbs(0.03, kTight));
  CHECK_THAT(adjusted[1], WithinAbs(0.06, kTight));
  CHECK_THAT(adjusted[2], WithinAbs(0.06, kTight));
  CHECK_THAT(adjusted[3], WithinAbs(0.02, kTight));
  // Capped at 1; one comparison is left alone; empty stays empty.
  CHECK(tinct::holm_adjust({0.4, 0.5, 0.6}) == std::vector<double>{1, 1, 1});
  CHECK(tinct::holm_adjust({0.04}) == std::vector<double>{0.04});
  CHECK(tinct::holm_adjust({}).empty());
  CHECK_THROWS_AS(tinct::holm_adjust({0.5, 1.5}), tinct::Error);
}

TEST_CASE("Bootstrap: the same seed gives the same interval, another seed another") {
  tinct::BootstrapOptions options;
  options.seed = 7;
  const tinct::BootstrapInterval a = tinct::paired_bootstrap(kD, options);
  const tinct::BootstrapInterval b = tinct::paired_bootstrap(kD, options);
  CHECK(a.low == b.low);
  CHECK(a.high == b.high);
  options.seed = 8;
  const tinct::BootstrapInterval c = tinct::paired_bootstrap(kD, options);
  CHECK((c.low != a.low || c.high != a.high));
  // The interval holds the mean difference of REFERENCES.md section 4 (0.0277) and lies
  // within the range of the differences.
  CHECK(a.defined);
  CHECK_THAT(a.mean, WithinRel(0.0277, 1e-12));
  CHECK(a.low < 0.0277);
  CHECK(a.high > 0.0277);
  CHECK(a.low > -0.006);
  CHECK(a.high < 0.057);
  CHECK(a.units == 10);
  CHECK_FALSE(a.clustered);
}

TEST_CASE("Bootstrap: clusters are resampled whole") {
  // Three folds whose runs agree closely within a fold but differ between folds: resampling
  // pairs treats the 12 runs as independent and gives a narrower interval than resampling
  // the 3 folds, whose resampled means can only be averages of fold means.
  const std::vector<double> d = {0.10, 0.11, 0.10, 0.11, 0.00, 0.01, 0.00, 0.01,
                                 0.05, 0.06, 0.05, 0.06};
  const std::vector<int> fold = {0, 0, 0, 0, 1, 1, 1, 1, 2, 2, 2, 2};
  const tinct::BootstrapInterval pairs = tinct::paired_bootstrap(d);
  const tinct::BootstrapInterval folds = tinct::paired_cluster_bootstrap(d, fold);
  CHECK(folds.clustered);
  CHECK(folds.units == 3);
  CHECK(folds.high - folds.low > pairs.high - pairs.low);
  // The extreme resamples are all-fold-1 (mean 0.005) and all-fold-0 (0.105), 1/27 each:
  // the 2.5 % and 97.5 % points sit on them.
  CHECK_THAT(folds.low, WithinAbs(0.005, 1e-12));
  CHECK_THAT(folds.high, WithinAbs(0.105, 1e-12));
  // One cluster: nothing to resample.
  const tinct::BootstrapInterval one = tinct::paired_cluster_bootstrap(d, std::vector<int>(12, 4));
  CHECK_FALSE(one.defined);
  CHECK(one.low == one.mean);
  CHECK_THROWS_AS(tinct::paired_cluster_bootstrap(d, {0, 1}), tinct::Error);
  CHECK_THROWS_AS(tinct::paired_bootstrap({}), tinct::Error);
}
