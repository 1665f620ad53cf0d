// trainer/assess/classification_metrics against the worked examples of REFERENCES.md section
// 3 (each value's source named beside it) and the stated rules for undefined cases.
// The scikit-learn comparison on random cases is tests/reference/test_metrics_reference.cpp.
#include <catch2/catch.hpp>

#include <cstdint>
#include <string>
#include <vector>

#include "assess/classification_metrics.hpp"
#include "util/error.hpp"

using tinct::ClassificationMetrics;
using tinct::classification_metrics;

namespace {

constexpr double kTight = 1e-12;

struct Labels {
  std::vector<int> truth, predicted;
};

// Samples from a (K, K) count matrix; transposed reads it as rows = predicted.
Labels labels_from(const std::vector<std::vector<int>>& counts, bool transposed = false) {
  Labels labels;
  for (std::size_t r = 0; r < counts.size(); ++r) {
    for (std::size_t c = 0; c < counts[r].size(); ++c) {
      for (int k = 0; k < counts[r][c]; ++k) {
        labels.truth.push_back(static_cast<int>(transposed ? c : r));
        labels.predicted.push_back(static_cast<int>(transposed ? r : c));
      }
    }
  }
  return labels;
}

ClassificationMetrics from_counts(const std::vector<std::vector<int>>& counts,
                                  bool transposed = false) {
  const Labels labels = labels_from(counts, transposed);
  return classification_metrics(labels.truth, labels.predicted,
                                static_cast<int>(counts.size()));
}

// REFERENCES.md section 3 binary example: (y, score), one positive/negative tie at 0.71.
const std::vector<int> kBinaryTruth = {1, 0, 1, 1, 0, 1, 0, 0, 1, 0, 1, 0};
const std::vector<double> kBinaryScore = {0.93, 0.88, 0.82, 0.77, 0.71, 0.71,
                                          0.64, 0.58, 0.52, 0.43, 0.36, 0.12};

std::vector<std::vector<double>> binary_probabilities() {
  std::vector<std::vector<double>> rows;
  for (double p : kBinaryScore) rows.push_back({1 - p, p});
  return rows;
}

std::vector<int> threshold_half() {
  std::vector<int> predicted;
  for (double p : kBinaryScore) predicted.push_back(p >= 0.5 ? 1 : 0);
  return predicted;
}

}  // namespace

TEST_CASE("metrics: REFERENCES.md 3-class matrix equals scikit-learn 1.2.1") {
  const ClassificationMetrics m = from_counts({{50, 3, 2}, {5, 20, 5}, {1, 4, 10}});
  REQUIRE(m.count == 100);
  CHECK(m.confusion == std::vector<std::vector<std::int64_t>>{{50, 3, 2}, {5, 20, 5}, {1, 4, 10}});
  // Source for every value below: REFERENCES.md section 3, computed with scikit-learn 1.2.1.
  CHECK(m.accuracy == Approx(0.8).margin(kTight));
  CHECK(m.balanced_accuracy == Approx(0.7474747474747474).margin(kTight));
  CHECK(m.per_class[0].precision == Approx(0.8928571428571429).margin(kTight));
  CHECK(m.per_class[1].precision == Approx(0.7407407407407407).margin(kTight));
  CHECK(m.per_class[2].precision == Approx(0.5882352941176471).margin(kTight));
  CHECK(m.per_class[0].recall == Approx(0.9090909090909091).margin(kTight));
  CHECK(m.per_class[1].recall == Approx(0.6666666666666666).margin(kTight));
  CHECK(m.per_class[2].recall == Approx(0.6666666666666666).margin(kTight));
  CHECK(m.per_class[0].f1 == Approx(0.9009009009009009).margin(kTight));
  CHECK(m.per_class[1].f1 == Approx(0.7017543859649122).margin(kTight));
  CHECK(m.per_class[2].f1 == Approx(0.625).margin(kTight));
  CHECK(m.macro_f1 == Approx(0.7425517622886044).margin(kTight));
  CHECK(m.weighted_f1 == Approx(0.7997718112849692).margin(kTight));
  CHECK(m.micro_f1 == Approx(0.8000000000000002).margin(kTight));
  CHECK(m.kappa == Approx(0.6584116140051238).margin(kTight));
  CHECK(m.per_class[0].support == 55);  // REFERENCES.md: supports 55, 30, 15
  CHECK(m.per_class[1].support == 30);
  CHECK(m.per_class[2].support == 15);
  CHECK_FALSE(m.roc_auc);
  CHECK_FALSE(m.ece);
}

TEST_CASE("metrics: REFERENCES.md binary example, ranking and threshold 0.5") {
  const ClassificationMetrics m =
      classification_metrics(kBinaryTruth, threshold_half(), 2, binary_probabilities());
  REQUIRE(m.roc_auc);
  REQUIRE(m.average_precision);
  // REFERENCES.md section 3: ROC AUC = 23.5/36 (Mann-Whitney, tie counted half).
  CHECK(*m.roc_auc == Approx(23.5 / 36).margin(kTight));
  // REFERENCES.md section 3: sklearn 1.2.1 average_precision_score, step-wise.
  CHECK(*m.average_precision == Approx(0.6973905723905723).margin(kTight));
  // REFERENCES.md section 3, at p >= 0.5: accuracy, F1 of class 1, matrix.
  CHECK(m.accuracy == Approx(0.5833333333333334).margin(kTight));
  CHECK(m.per_class[1].f1 == Approx(0.6666666666666667).margin(kTight));
  CHECK(m.confusion == std::vector<std::vector<std::int64_t>>{{2, 4}, {1, 5}});
  // REFERENCES.md section 3: top-label ECE, 10 bins, = 49/240 (numpy 0.20416666666666664).
  REQUIRE(m.ece);
  CHECK(*m.ece == Approx(49.0 / 240).margin(kTight));
  CHECK(*m.ece == Approx(0.20416666666666664).margin(kTight));
}

TEST_CASE("metrics: REFERENCES.md positive-class ECE of the binary example") {
  // REFERENCES.md section 3: positive-class ECE, 10 bins, computed in numpy.
  CHECK(tinct::positive_class_ece(kBinaryTruth, binary_probabilities()) ==
        Approx(0.24083333333333332).margin(kTight));
  CHECK(tinct::expected_calibration_error(kBinaryTruth, binary_probabilities()) ==
        Approx(0.20416666666666664).margin(kTight));
}

TEST_CASE("metrics: Congalton (1991) error matrix, read as rows = map, columns = reference") {
  // Congalton 1991 (REFERENCES.md section 3, from memory; matches published 74 % and KHAT
  // 0.65): rows map D, C, AG, SB; columns reference. Transposed to rows = truth.
  const ClassificationMetrics m = from_counts(
      {{65, 4, 22, 24}, {6, 81, 5, 8}, {0, 11, 85, 19}, {4, 7, 3, 90}}, /*transposed=*/true);
  REQUIRE(m.count == 434);
  CHECK(m.confusion[0] == std::vector<std::int64_t>{65, 6, 0, 4});  // reference D
  // Computed values below: REFERENCES.md section 3, scikit-learn on the transposed matrix.
  CHECK(m.accuracy == Approx(0.7396313364055299).margin(kTight));  // 321/434
  CHECK(m.accuracy == Approx(321.0 / 434).margin(kTight));
  CHECK(m.kappa == Approx(0.6535162707888824).margin(kTight));
  CHECK(m.per_class[0].recall == Approx(0.8666666666666667).margin(kTight));     // producer's D
  CHECK(m.per_class[1].recall == Approx(0.7864077669902912).margin(kTight));     // C
  CHECK(m.per_class[2].recall == Approx(0.7391304347826086).margin(kTight));     // AG
  CHECK(m.per_class[3].recall == Approx(0.6382978723404256).margin(kTight));     // SB
  CHECK(m.per_class[0].precision == Approx(0.5652173913043478).margin(kTight));  // user's D
  CHECK(m.per_class[1].precision == Approx(0.81).margin(kTight));                // C
  CHECK(m.per_class[2].precision == Approx(0.7391304347826086).margin(kTight));  // AG
  CHECK(m.per_class[3].precision == Approx(0.8653846153846154).margin(kTight));  // SB
  CHECK(m.macro_f1 == Approx(0.7390160988249161).margin(kTight));
}

TEST_CASE("metrics: a class never predicted and a class absent from truth") {
  // Class 2 never predicted, class 3 never in truth (but predicted once).
  const ClassificationMetrics m =
      classification_metrics({0, 0, 1, 1, 2, 2}, {0, 1, 1, 1, 0, 3}, 4);
  CHECK_FALSE(m.per_class[2].precision_defined);
  CHECK(m.per_class[2].precision == 0);
  CHECK(m.per_class[2].recall_defined);
  CHECK(m.per_class[2].f1 == 0);
  CHECK_FALSE(m.per_class[3].recall_defined);
  CHECK(m.per_class[3].recall == 0);
  CHECK(m.per_class[3].precision_defined);
  // Balanced accuracy over classes 0, 1, 2 only: (1/2 + 1 + 0) / 3; macro F1 over all 4.
  CHECK(m.balanced_accuracy == Approx(0.5).margin(kTight));
  const double f1_0 = 2 * 0.5 * 0.5 / 1.0, f1_1 = 2 * (2.0 / 3) * 1 / (2.0 / 3 + 1);
  CHECK(m.macro_f1 == Approx((f1_0 + f1_1) / 4).margin(kTight));
  CHECK(m.weighted_f1 == Approx((2 * f1_0 + 2 * f1_1) / 6).margin(kTight));
}

TEST_CASE("metrics: kappa is 0 when chance agreement is 1 and ranking needs both classes") {
  const ClassificationMetrics m =
      classification_metrics({1, 1, 1}, {1, 1, 1}, 2, {{0.2, 0.8}, {0.4, 0.6}, {0.1, 0.9}});
  CHECK(m.accuracy == 1);
  CHECK(m.kappa == 0);
  CHECK(m.balanced_accuracy == 1);
  CHECK_FALSE(m.roc_auc);
  CHECK_FALSE(m.average_precision);
  REQUIRE(m.ece);  // conf 0.8, 0.6, 0.9 all correct: mean gap weighted by bin
  CHECK(*m.ece == Approx((0.2 + 0.4 + 0.1) / 3).margin(kTight));
}

TEST_CASE("metrics: calibration bins are (m-1)/10 < conf <= m/10 and ties predict the first class") {
  // 0.3 sits on an edge (bin 3), 0.31 in bin 4: together in one bin the ECE would be 0.195.
  CHECK(tinct::positive_class_ece({0, 1}, {{0.7, 0.3}, {0.69, 0.31}}) ==
        Approx(0.5 * 0.3 + 0.5 * 0.69).margin(kTight));
  // Tie between classes 0 and 1 predicts 0: correct for truth 0 (gap 0.6), wrong for 1 (0.4).
  CHECK(tinct::expected_calibration_error({0}, {{0.4, 0.4, 0.2}}) == Approx(0.6).margin(kTight));
  CHECK(tinct::expected_calibration_error({1}, {{0.4, 0.4, 0.2}}) == Approx(0.4).margin(kTight));
  CHECK(tinct::positive_class_ece({0}, {{1.0, 0.0}}) == 0);  // p = 0 goes to bin 1
}

TEST_CASE("metrics: ROC AUC of all-tied scores is one half, AP the positive rate") {
  CHECK(*tinct::roc_auc({0, 1, 1, 0}, {0.5, 0.5, 0.5, 0.5}) == Approx(0.5).margin(kTight));
  CHECK(*tinct::average_precision({0, 1, 1, 0, 0}, {0.5, 0.5, 0.5, 0.5, 0.5}) ==
        Approx(0.4).margin(kTight));
  CHECK(*tinct::roc_auc({0, 1}, {0.1, 0.9}) == 1);
}

TEST_CASE("metrics: malformed input is refused with a message") {
  CHECK_THROWS_AS(classification_metrics({}, {}, 2), tinct::Error);
  CHECK_THROWS_WITH(classification_metrics({0, 1}, {0}, 2),
                    Catch::Contains("2 true labels but 1 predictions"));
  CHECK_THROWS_WITH(classification_metrics({0, 3}, {0, 1}, 3),
                    Catch::Contains("truth[1] = 3"));
  CHECK_THROWS_WITH(classification_metrics({0, 1}, {0, 1}, 2, {{0.5, 0.5}, {0.5, 0.6}}),
                    Catch::Contains("probabilities[1] sums to"));
  CHECK_THROWS_WITH(classification_metrics({0, 1}, {0, 1}, 2, {{1.0}, {0.0, 1.0}}),
                    Catch::Contains("probabilities[0] has 1 entries"));
}

TEST_CASE("metrics: JSON names classes, flags undefined values and writes nullopt as null") {
  const ClassificationMetrics m = classification_metrics({0, 0, 1}, {0, 0, 0}, 2);
  const std::string json = tinct::metrics_json(m, {"heath", "bog"}).dump();
  CHECK(json.find("\"roc_auc\":null") != std::string::npos);
  CHECK(json.find("\"name\":\"bog\",\"support\":1,\"precision\":0,"
                  "\"precision_defined\":false") != std::string::npos);
  CHECK(json.find("\"confusion\":[[2,0],[1,0]]") != std::string::npos);
  CHECK(json.find("nan") == std::string::npos);
  CHECK_THROWS_AS(tinct::metrics_json(m, {"heath"}), tinct::Error);
}

TEST_CASE("metrics: confusion CSV has one row per true class and quotes names") {
  const ClassificationMetrics m = classification_metrics({0, 0, 1, 2}, {0, 1, 1, 2}, 3);
  CHECK(tinct::confusion_csv(m, {"heath", "bog", "grass, improved"}) ==
        "true\\predicted,heath,bog,\"grass, improved\"\n"
        "heath,1,1,0\n"
        "bog,0,1,0\n"
        "\"grass, improved\",0,0,1\n");
}
