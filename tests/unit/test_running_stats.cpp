#include <catch2/catch.hpp>

#include <cmath>
#include <vector>

#include "util/running_stats.hpp"

using Catch::Matchers::WithinAbs;
using Catch::Matchers::WithinRel;

// Check values: REFERENCES.md section 8, computed with numpy 1.24.2 (Debian).
static const std::vector<double> kValues{1203, 1187, 1450, 998, 2210, 1602, 875, 1333, 1290, 1741};

TEST_CASE("Welford mean and M2 follow the numpy reference step by step") {
  const double mean_after[] = {1203, 1195, 1280, 1209.5, 1409.6};
  const double m2_after[] = {0, 128, 43478, 103121, 903921.2};
  tinct::RunningStats stats;
  for (int i = 0; i < 5; ++i) {
    stats.add(kValues[i]);
    CHECK_THAT(stats.mean(), WithinAbs(mean_after[i], 1e-9));
    CHECK_THAT(stats.m2(), WithinAbs(m2_after[i], 1e-6));
  }
}

TEST_CASE("Welford statistics of the ten values equal numpy's") {
  tinct::RunningStats stats;
  for (double v : kValues) stats.add(v);
  CHECK(stats.count() == 10);
  CHECK_THAT(stats.mean(), WithinAbs(1388.9, 1e-9));
  CHECK_THAT(stats.m2(), WithinRel(1352448.9, 1e-12));
  CHECK_THAT(stats.population_variance(), WithinRel(135244.89, 1e-12));
  CHECK_THAT(stats.sample_variance(), WithinRel(150272.1, 1e-12));
  CHECK_THAT(stats.population_std(), WithinRel(367.756563503631, 1e-12));
  CHECK_THAT(stats.sample_std(), WithinRel(387.649455049275, 1e-12));
  CHECK(stats.min() == 875);
  CHECK(stats.max() == 2210);
}

TEST_CASE("Chan merge of two halves equals one pass") {
  tinct::RunningStats first, second;
  for (int i = 0; i < 4; ++i) first.add(kValues[i]);
  for (int i = 4; i < 10; ++i) second.add(kValues[i]);
  first.merge(second);
  CHECK_THAT(first.mean(), WithinAbs(1388.9, 1e-9));
  CHECK_THAT(first.m2(), WithinRel(1352448.9, 1e-12));
  CHECK(first.count() == 10);
}

TEST_CASE("Welford stays exact where the naive formula fails (offset 1e9)") {
  tinct::RunningStats stats;
  double sum = 0, sum_sq = 0;
  for (double v : kValues) {
    stats.add(v + 1e9);
    sum += v + 1e9;
    sum_sq += (v + 1e9) * (v + 1e9);
  }
  const double naive = sum_sq / 10 - (sum / 10) * (sum / 10);
  CHECK_THAT(stats.population_variance(), WithinRel(135244.89, 1e-6));
  CHECK(std::fabs(naive - 135244.89) > 10.0);  // REFERENCES.md: naive gives 135296.0
}
