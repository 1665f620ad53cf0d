// trainer/assess/area_of_applicability against a direct numpy implementation of the same
// formulas (float64), on the 4 training sets make_applicability_reference.py writes into
// $TINCT_TEST_DATA. tinct computes distances in float32, hence tolerances of 1e-5.
#include <catch2/catch.hpp>

#include <cmath>
#include <vector>

#include "assess/area_of_applicability.hpp"
#include "reference_cases.hpp"

using namespace tinct_reference;

namespace {

constexpr double kTolerance = 1e-5;

std::vector<float> floats(const Fields& fields, const std::string& name) {
  std::vector<float> out;
  for (double v : numbers(fields, name)) out.push_back(static_cast<float>(v));  // exact: float32 values
  return out;
}

void check_close(double ours, double numpy) {
  CHECK(ours == Approx(numpy).epsilon(kTolerance).margin(kTolerance));
}

}  // namespace

TEST_CASE("applicability reference: d_bar, training and query DI and threshold equal numpy") {
  const std::map<int, Fields> cases = read_cases("applicability_reference.csv");
  REQUIRE(cases.size() == 4);
  int outside = 0, inside = 0, zero = 0;
  for (const auto& [number, fields] : cases) {
    INFO("case " << number << " of applicability_reference.csv");
    const int features = integers(fields, "features").at(0);
    const tinct::ApplicabilityModel model = tinct::fit_applicability(
        floats(fields, "training"), features, integers(fields, "folds"), numbers(fields, "weights"),
        /*threads=*/2);
    check_close(model.mean_distance, numbers(fields, "d_bar").at(0));
    const std::vector<double> training_index = numbers(fields, "training_index");
    REQUIRE(model.training_index.size() == training_index.size());
    for (std::size_t i = 0; i < training_index.size(); ++i) {
      INFO("training vector " << i);
      check_close(model.training_index[i], training_index[i]);
    }
    const std::vector<double> limits = numbers(fields, "limits");  // q1, q3, whisker, threshold
    check_close(model.q1, limits[0]);
    check_close(model.q3, limits[1]);
    check_close(model.whisker, limits[2]);
    check_close(model.threshold, limits[3]);

    const std::vector<float> index = tinct::applicability_index(model, floats(fields, "queries"), 2);
    const std::vector<double> numpy_index = numbers(fields, "query_index");
    REQUIRE(index.size() == numpy_index.size());
    for (std::size_t k = 0; k < index.size(); ++k) {
      INFO("query " << k);
      check_close(index[k], numpy_index[k]);
      if (std::fabs(numpy_index[k] - limits[3]) > 1e-4)
        CHECK(model.inside(index[k]) == (numpy_index[k] <= limits[3]));
      outside += numpy_index[k] > limits[3];
      inside += numpy_index[k] <= limits[3];
      zero += numpy_index[k] == 0;
    }
  }
  INFO("queries inside " << inside << ", outside " << outside << ", at a training vector " << zero);
  CHECK(outside >= 200);
  CHECK(inside >= 200);
  CHECK(zero >= 200);
}
