// trainer/assess/classification_metrics against scikit-learn 1.2 (labels=range(K),
// zero_division=0) and numpy's ECE on 320 random cases, as written by
// make_metrics_reference.py (Debian's /usr/bin/python3) into $TINCT_TEST_DATA.
// Where sklearn's kappa is NaN (p_e = 1) tinct's stated value is 0.
#include <catch2/catch.hpp>

#include <cmath>
#include <cstdint>
#include <cstdlib>
#include <fstream>
#include <map>
#include <optional>
#include <sstream>
#include <string>
#include <vector>

#include "assess/classification_metrics.hpp"

namespace {

constexpr double kTolerance = 1e-9;

using Fields = std::map<std::string, std::vector<std::string>>;  // field -> values

// Cases of metrics_reference.csv by number; each row is "case,field,values...".
std::map<int, Fields> read_cases() {
  const char* folder = std::getenv("TINCT_TEST_DATA");
  if (folder == nullptr)
    FAIL("TINCT_TEST_DATA is not set: run through ctest (fixture metrics_reference)");
  const std::string path = std::string(folder) + "/metrics_reference.csv";
  std::ifstream in(path);
  if (!in) FAIL("cannot read " << path << ": run make_metrics_reference.py first (ctest does)");
  std::map<int, Fields> cases;
  std::string line;
  std::getline(in, line);
  while (std::getline(in, line)) {
    std::stringstream row(line);
    std::string number, field, value;
    std::getline(row, number, ',');
    std::getline(row, field, ',');
    std::vector<std::string>& values = cases[std::stoi(number)][field];
    while (std::getline(row, value, ',')) values.push_back(value);
  }
  return cases;
}

std::vector<double> numbers(const Fields& fields, const std::string& name) {
  std::vector<double> out;
  for (const std::string& text : fields.at(name)) out.push_back(std::strtod(text.c_str(), nullptr));
  return out;
}

std::vector<int> integers(const Fields& fields, const std::string& name) {
  std::vector<int> out;
  for (const std::string& text : fields.at(name)) out.push_back(std::stoi(text));
  return out;
}

double number(const Fields& fields, const std::string& name) {
  return numbers(fields, name).at(0);
}

// Row-major (N, K) rows, or none when the case has no probabilities.
std::vector<std::vector<double>> probability_rows(const Fields& fields, int classes) {
  if (fields.count("probabilities") == 0) return {};
  const std::vector<double> flat = numbers(fields, "probabilities");
  std::vector<std::vector<double>> rows;
  for (std::size_t i = 0; i < flat.size(); i += classes)
    rows.emplace_back(flat.begin() + i, flat.begin() + i + classes);
  return rows;
}

void check_optional(const std::optional<double>& ours, const Fields& fields,
                    const std::string& name) {
  INFO(name);
  if (fields.count(name) == 0 || fields.at(name).empty()) {
    CHECK_FALSE(ours.has_value());
    return;
  }
  REQUIRE(ours.has_value());
  CHECK(*ours == Approx(number(fields, name)).margin(kTolerance));
}

void check_per_class(const tinct::ClassificationMetrics& m, const Fields& fields) {
  const std::vector<double> precision = numbers(fields, "precision"),
                            recall = numbers(fields, "recall"), f1 = numbers(fields, "f1");
  const std::vector<int> support = integers(fields, "support");
  for (int c = 0; c < m.classes; ++c) {
    INFO("class " << c);
    CHECK(m.per_class[c].precision == Approx(precision[c]).margin(kTolerance));
    CHECK(m.per_class[c].recall == Approx(recall[c]).margin(kTolerance));
    CHECK(m.per_class[c].f1 == Approx(f1[c]).margin(kTolerance));
    CHECK(m.per_class[c].support == support[c]);
  }
}

void check_confusion(const tinct::ClassificationMetrics& m, const Fields& fields) {
  const std::vector<int> flat = integers(fields, "confusion");
  for (int r = 0; r < m.classes; ++r)
    for (int c = 0; c < m.classes; ++c) CHECK(m.confusion[r][c] == flat[r * m.classes + c]);
}

void check_kappa(const tinct::ClassificationMetrics& m, const Fields& fields) {
  const double theirs = number(fields, "kappa");
  if (std::isnan(theirs)) CHECK(m.kappa == 0);  // p_e = 1: sklearn NaN, tinct 0
  else CHECK(m.kappa == Approx(theirs).margin(kTolerance));
}

// The situations the rules are about, counted so a change to the script cannot drop them.
struct Coverage {
  int never_predicted = 0, absent_from_truth = 0, kappa_nan = 0, ranked = 0, unranked = 0;
  int tied_scores = 0;
};

void count_coverage(Coverage& seen, const tinct::ClassificationMetrics& m,
                    const Fields& fields, const std::vector<std::vector<double>>& rows) {
  for (const tinct::ClassMetrics& c : m.per_class) {
    seen.never_predicted += !c.precision_defined;
    seen.absent_from_truth += !c.recall_defined;
  }
  seen.kappa_nan += std::isnan(number(fields, "kappa"));
  if (m.classes != 2 || rows.empty()) return;
  seen.ranked += m.roc_auc.has_value();
  seen.unranked += !m.roc_auc.has_value();
  std::map<double, int> scores;
  for (const auto& row : rows) ++scores[row[1]];
  seen.tied_scores += m.roc_auc.has_value() && scores.size() < rows.size();
}

void check_case(const Fields& fields, Coverage& seen) {
  const int classes = integers(fields, "classes").at(0);
  const auto rows = probability_rows(fields, classes);
  const tinct::ClassificationMetrics m = tinct::classification_metrics(
      integers(fields, "truth"), integers(fields, "predicted"), classes, rows);
  CHECK(m.accuracy == Approx(number(fields, "accuracy")).margin(kTolerance));
  CHECK(m.balanced_accuracy == Approx(number(fields, "balanced_accuracy")).margin(kTolerance));
  CHECK(m.macro_f1 == Approx(number(fields, "macro_f1")).margin(kTolerance));
  CHECK(m.weighted_f1 == Approx(number(fields, "weighted_f1")).margin(kTolerance));
  CHECK(m.micro_f1 == Approx(number(fields, "micro_f1")).margin(kTolerance));
  check_kappa(m, fields);
  check_per_class(m, fields);
  check_confusion(m, fields);
  check_optional(m.ece, fields, "ece");
  if (classes == 2 && !rows.empty()) {
    check_optional(m.roc_auc, fields, "roc_auc");
    check_optional(m.average_precision, fields, "average_precision");
    CHECK(tinct::positive_class_ece(integers(fields, "truth"), rows) ==
          Approx(number(fields, "positive_class_ece")).margin(kTolerance));
  } else {
    CHECK_FALSE(m.roc_auc);
    CHECK_FALSE(m.average_precision);
  }
  count_coverage(seen, m, fields, rows);
}

}  // namespace

TEST_CASE("metrics reference: 320 random cases equal scikit-learn 1.2 and numpy to 1e-9") {
  const std::map<int, Fields> cases = read_cases();
  REQUIRE(cases.size() == 320);
  Coverage seen;
  for (const auto& [number, fields] : cases) {
    INFO("case " << number << " of metrics_reference.csv");
    check_case(fields, seen);
  }
  INFO("never predicted " << seen.never_predicted << ", absent from truth "
       << seen.absent_from_truth << ", kappa NaN " << seen.kappa_nan << ", binary ranked "
       << seen.ranked << " (tied " << seen.tied_scores << "), one-class " << seen.unranked);
  CHECK(seen.never_predicted >= 20);
  CHECK(seen.absent_from_truth >= 20);
  CHECK(seen.kappa_nan >= 5);
  CHECK(seen.ranked >= 30);
  CHECK(seen.tied_scores >= 10);
  CHECK(seen.unranked >= 5);
}
