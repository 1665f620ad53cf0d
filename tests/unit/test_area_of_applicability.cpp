// trainer/assess/area_of_applicability on a one-feature example worked by hand, plus the
// properties the map relies on (0 at training vectors, far queries outside, weights, constant
// features, thread count). The comparison with numpy is
// tests/reference/test_applicability_reference.cpp.
#include <catch2/catch.hpp>

#include <cmath>
#include <cstdint>
#include <random>
#include <vector>

#include "assess/area_of_applicability.hpp"
#include "util/error.hpp"

using Catch::Matchers::WithinAbs;
using Catch::Matchers::WithinRel;

namespace {

// x = 0, 1, 2, 3, 10 in folds 0, 1, 0, 1, 0. By hand (the sd cancels in every ratio):
// d_bar = (1+2+3+10+1+2+9+1+8+7)/10 = 4.4 raw units; nearest other-fold distances 1, 1, 1, 1, 7;
// training index 1/4.4 (x4) and 7/4.4; q1 = q3 = 1/4.4, whisker 1/4.4, threshold 1/4.4.
const std::vector<float> kLine = {0, 1, 2, 3, 10};
const std::vector<int> kLineFolds = {0, 1, 0, 1, 0};

std::vector<float> random_features(std::size_t n, int features, std::uint64_t seed) {
  std::mt19937_64 generator(seed);
  std::vector<float> out(n * features);
  for (float& v : out) v = static_cast<float>(generator() >> 40) / static_cast<float>(1 << 24);
  return out;
}

}  // namespace

TEST_CASE("Area of applicability: a one-feature example worked by hand") {
  const tinct::ApplicabilityModel model = tinct::fit_applicability(kLine, 1, kLineFolds);
  const double sd = std::sqrt(62.8 / 4);  // sample sd of kLine
  CHECK_THAT(model.mean_distance, WithinRel(4.4 / sd, 1e-6));
  REQUIRE(model.training_index.size() == 5);
  for (int i = 0; i < 4; ++i) CHECK_THAT(model.training_index[i], WithinRel(1 / 4.4, 1e-6));
  CHECK_THAT(model.training_index[4], WithinRel(7 / 4.4, 1e-6));
  CHECK_THAT(model.q1, WithinRel(1 / 4.4, 1e-6));
  CHECK_THAT(model.q3, WithinRel(1 / 4.4, 1e-6));
  CHECK_THAT(model.whisker, WithinRel(1 / 4.4, 1e-6));
  CHECK_THAT(model.threshold, WithinRel(1 / 4.4, 1e-6));

  const std::vector<float> index = tinct::applicability_index(model, {1.0f, 2.5f, 6.0f, -30.0f});
  CHECK(index[0] == 0);  // a training vector's own location
  CHECK_THAT(index[1], WithinRel(0.5 / 4.4, 1e-6));
  CHECK_THAT(index[2], WithinRel(3 / 4.4, 1e-6));
  CHECK_THAT(index[3], WithinRel(30 / 4.4, 1e-6));
  CHECK(model.inside(index[0]));
  CHECK(model.inside(index[1]));
  CHECK_FALSE(model.inside(index[2]));
  CHECK_FALSE(model.inside(index[3]));
}

TEST_CASE("Area of applicability: training vectors score 0, far queries are outside") {
  const std::size_t n = 300;
  const int features = 7;
  const std::vector<float> training = random_features(n, features, 5);
  std::vector<int> folds(n);
  for (std::size_t i = 0; i < n; ++i) folds[i] = static_cast<int>(i % 4);
  const tinct::ApplicabilityModel model = tinct::fit_applicability(training, features, folds);
  const std::vector<float> own = tinct::applicability_index(model, training);
  for (float v : own) REQUIRE(v == 0);
  std::vector<float> far(training.begin(), training.begin() + features);
  far[2] += 25;  // about 85 training sd away along one feature
  const std::vector<float> far_index = tinct::applicability_index(model, far);
  CHECK(far_index[0] > 5 * model.threshold);
  CHECK_FALSE(model.inside(far_index[0]));
  CHECK(model.threshold > 0);
  CHECK(model.threshold <= model.whisker);
}

TEST_CASE("Area of applicability: the thread count does not change any value") {
  const std::size_t n = 700;  // several chunks and several distance tiles
  const int features = 5;
  const std::vector<float> training = random_features(n, features, 6);
  std::vector<int> folds(n);
  for (std::size_t i = 0; i < n; ++i) folds[i] = static_cast<int>(i * 7 % 5);
  const auto one = tinct::fit_applicability(training, features, folds, {}, 1);
  const auto two = tinct::fit_applicability(training, features, folds, {}, 2);
  CHECK(one.mean_distance == two.mean_distance);
  CHECK(one.training_index == two.training_index);
  CHECK(one.threshold == two.threshold);
  const std::vector<float> queries = random_features(333, features, 7);
  CHECK(tinct::applicability_index(one, queries, 1) == tinct::applicability_index(two, queries, 2));
}

TEST_CASE("Area of applicability: weight 0 and constant features drop out") {
  // Feature 2 is noise weighted 0, feature 3 constant: both leave the line example unchanged.
  std::vector<float> features;
  for (std::size_t i = 0; i < kLine.size(); ++i) {
    features.insert(features.end(), {kLine[i], static_cast<float>(i * i % 3), 5.0f});
  }
  const auto model = tinct::fit_applicability(features, 3, kLineFolds, {1.0, 0.0, 1.0});
  CHECK(model.constant_features == 1);
  CHECK_THAT(model.threshold, WithinRel(1 / 4.4, 1e-6));
  const std::vector<float> index = tinct::applicability_index(model, {6.0f, 100.0f, -7.0f});
  CHECK_THAT(index[0], WithinRel(3 / 4.4, 1e-6));
}

TEST_CASE("Area of applicability: malformed training data is refused") {
  CHECK_THROWS_AS(tinct::fit_applicability(kLine, 1, {0, 0, 0, 0, 0}), tinct::Error);  // 1 fold
  CHECK_THROWS_AS(tinct::fit_applicability(kLine, 1, {0, 1}), tinct::Error);  // sizes differ
  CHECK_THROWS_AS(tinct::fit_applicability(kLine, 1, kLineFolds, {-1.0}), tinct::Error);
  CHECK_THROWS_AS(tinct::fit_applicability({1, 1, 1, 1, 1}, 1, kLineFolds), tinct::Error);
  CHECK_THROWS_AS(tinct::fit_applicability({0, 1, NAN, 3, 4}, 1, kLineFolds), tinct::Error);
}
