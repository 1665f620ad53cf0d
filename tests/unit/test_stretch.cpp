// Percentile histogram and band stretch on small cases worked by hand with numpy's
// default rule (linear between order statistics at (n-1)*p/100); the printed values
// agree with np.percentile (numpy 1.24.2, Debian). Exact equality on large random
// arrays is checked in tests/reference/.
#include <catch2/catch.hpp>

#include <cmath>
#include <initializer_list>

#include "colour/stretch.hpp"
#include "util/error.hpp"

using Catch::Matchers::WithinAbs;

namespace {

tinct::PercentileHistogram histogram_of(std::initializer_list<double> values, double min = 0,
                                        double max = 10) {
  tinct::PercentileHistogram histogram(min, max, static_cast<std::size_t>(max - min + 1));
  for (double v : values) histogram.add(v);
  return histogram;
}

}  // namespace

TEST_CASE("percentile interpolates between order statistics like np.percentile") {
  const auto h = histogram_of({3, 1, 5, 2, 4});
  CHECK(h.count() == 5);
  CHECK(h.percentile(0) == 1.0);
  CHECK(h.percentile(100) == 5.0);
  CHECK(h.percentile(50) == 3.0);                        // index 2
  CHECK(h.percentile(25) == 2.0);                        // index 1
  CHECK_THAT(h.percentile(10), WithinAbs(1.4, 1e-12));   // index 0.4: 1 + 0.4 * (2 - 1)
  CHECK_THAT(h.percentile(90), WithinAbs(4.6, 1e-12));   // index 3.6: 4 + 0.6 * (5 - 4)
}

TEST_CASE("percentile with ties and a single value") {
  const auto ties = histogram_of({0, 0, 0, 10});
  CHECK(ties.percentile(50) == 0.0);                         // index 1.5 between two zeros
  CHECK_THAT(ties.percentile(75), WithinAbs(2.5, 1e-12));    // index 2.25: 0 + 0.25 * 10
  CHECK(ties.percentile(100) == 10.0);
  const auto one = histogram_of({7});
  CHECK(one.percentile(0) == 7.0);
  CHECK(one.percentile(63.5) == 7.0);
  CHECK(one.percentile(100) == 7.0);
}

TEST_CASE("percentile of bytes 0..99 at 2 and 98") {
  tinct::PercentileHistogram h(0, 255, 256);
  for (int v = 0; v < 100; ++v) h.add(v);
  CHECK_THAT(h.percentile(2), WithinAbs(1.98, 1e-12));    // index 99 * 0.02 = 1.98
  CHECK_THAT(h.percentile(98), WithinAbs(97.02, 1e-12));  // index 97.02
}

TEST_CASE("percentile histogram clamps out-of-range values and skips NaN") {
  const auto h = histogram_of({-5, 20, 3, NAN});
  CHECK(h.count() == 3);
  CHECK(h.percentile(0) == 0.0);
  CHECK(h.percentile(50) == 3.0);
  CHECK(h.percentile(100) == 10.0);
}

TEST_CASE("percentile with coarse bins is within one bin width") {
  tinct::PercentileHistogram h(0, 1, 101);  // centres 0, 0.01, ..., 1
  h.add(0.123);
  h.add(0.456);
  CHECK_THAT(h.percentile(0), WithinAbs(0.12, 1e-12));  // nearest centre
  CHECK_THAT(h.percentile(0), WithinAbs(0.123, 0.01));
  CHECK_THAT(h.percentile(100), WithinAbs(0.456, 0.01));
}

TEST_CASE("percentile histogram rejects bad ranges, percents and empty data") {
  CHECK_THROWS_AS(tinct::PercentileHistogram(5, 5, 10), tinct::Error);
  CHECK_THROWS_AS(tinct::PercentileHistogram(0, 1, 1), tinct::Error);
  tinct::PercentileHistogram empty(0, 255, 256);
  CHECK_THROWS_AS(empty.percentile(50), tinct::Error);
  empty.add(1);
  CHECK_THROWS_AS(empty.percentile(-1), tinct::Error);
  CHECK_THROWS_AS(empty.percentile(100.5), tinct::Error);
}

TEST_CASE("band stretch maps low to 0 and high to 1, clamped, then gamma") {
  const tinct::BandStretch linear{10, 20, 1.0};
  CHECK(linear.apply(10) == 0.0);
  CHECK(linear.apply(15) == 0.5);
  CHECK(linear.apply(20) == 1.0);
  CHECK(linear.apply(5) == 0.0);
  CHECK(linear.apply(25) == 1.0);
  CHECK(std::isnan(linear.apply(NAN)));
  const tinct::BandStretch bright{10, 20, 2.0};
  CHECK_THAT(bright.apply(15), WithinAbs(std::sqrt(0.5), 1e-15));  // 0.5^(1/2)
  CHECK_THAT(bright.apply(12.5), WithinAbs(0.5, 1e-15));           // 0.25^(1/2)
}

TEST_CASE("band stretch of a constant band is mid-grey") {
  const tinct::BandStretch flat{5, 5, 1.0};
  CHECK(flat.apply(0) == 0.5);
  CHECK(flat.apply(5) == 0.5);
  CHECK(flat.apply(1e9) == 0.5);
  const auto constant = histogram_of({4, 4, 4});
  const tinct::BandStretch made = tinct::make_stretch(constant, {});
  CHECK(made.low == 4.0);
  CHECK(made.high == 4.0);
  CHECK(made.apply(4) == 0.5);
}

TEST_CASE("make_stretch takes the 2nd and 98th percentiles by default") {
  tinct::PercentileHistogram h(0, 255, 256);
  for (int v = 0; v < 100; ++v) h.add(v);
  const tinct::BandStretch s = tinct::make_stretch(h, {});
  CHECK_THAT(s.low, WithinAbs(1.98, 1e-12));
  CHECK_THAT(s.high, WithinAbs(97.02, 1e-12));
  CHECK(s.gamma == 1.0);
  CHECK_THAT(s.apply(49.5), WithinAbs(0.5, 1e-12));  // the midpoint of 1.98 and 97.02
  CHECK_THROWS_AS(tinct::make_stretch(h, {50, 50, 1}), tinct::Error);
  CHECK_THROWS_AS(tinct::make_stretch(h, {2, 98, 0}), tinct::Error);
  CHECK_THROWS_AS(tinct::make_stretch(h, {-1, 98, 1}), tinct::Error);
}
