// trainer/assess/temperature_scaling against SciPy 1.10's minimize_scalar on the same mean
// negative log-likelihood, on the 12 validation sets make_temperature_reference.py writes
// into $TINCT_TEST_DATA; and calibration error drops on its over-confident sets.
#include <catch2/catch.hpp>

#include <vector>

#include "assess/classification_metrics.hpp"
#include "assess/temperature_scaling.hpp"
#include "reference_cases.hpp"

using namespace tinct_reference;

TEST_CASE("temperature reference: fitted T equals SciPy's minimize_scalar to 1e-4") {
  const std::map<int, Fields> cases = read_cases("temperature_reference.csv");
  REQUIRE(cases.size() == 12);
  int overconfident = 0;
  for (const auto& [number, fields] : cases) {
    INFO("case " << number << " of temperature_reference.csv");
    const int classes = integers(fields, "classes").at(0);
    const std::vector<double> flat = numbers(fields, "logits");
    std::vector<std::vector<double>> logits;
    for (std::size_t i = 0; i < flat.size(); i += classes)
      logits.emplace_back(flat.begin() + i, flat.begin() + i + classes);
    const std::vector<int> labels = integers(fields, "labels");
    const double scipy_temperature = numbers(fields, "temperature").at(0);
    const std::vector<double> scipy_nll = numbers(fields, "nll");  // at T = 1, at SciPy's T

    const tinct::TemperatureFit fit = tinct::fit_temperature(logits, labels);
    INFO("T = " << fit.temperature << ", SciPy " << scipy_temperature);
    CHECK_FALSE(fit.at_bound);
    CHECK(fit.temperature == Approx(scipy_temperature).epsilon(1e-4));
    CHECK(fit.nll_before == Approx(scipy_nll[0]).epsilon(1e-12));
    CHECK(fit.nll_after == Approx(scipy_nll[1]).epsilon(1e-9));
    CHECK(fit.nll_after <= scipy_nll[1] * (1 + 1e-12));  // no worse a minimum than SciPy's

    if (numbers(fields, "factor").at(0) < 2) continue;
    ++overconfident;
    const double before =
        tinct::expected_calibration_error(labels, tinct::apply_temperature(logits, 1.0));
    const double after =
        tinct::expected_calibration_error(labels, tinct::apply_temperature(logits, fit.temperature));
    INFO("ECE " << before << " -> " << after);
    CHECK(after < before);
  }
  CHECK(overconfident >= 2);
}
