// The colour module against outside libraries: scikit-image 0.19 rgb2lab and numpy 1.24
// np.percentile, as written by make_colour_reference.py (Debian's /usr/bin/python3) into
// $TINCT_TEST_DATA. REFERENCES.md section 2: formula and skimage differ by up to 0.02.
#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <cstdint>
#include <cstdlib>
#include <fstream>
#include <map>
#include <sstream>
#include <string>
#include <utility>
#include <vector>

#include "colour/srgb_lab.hpp"
#include "colour/stretch.hpp"

namespace {

using Row = std::vector<std::string>;

// The rows of a CSV written by make_colour_reference.py, header dropped.
std::vector<Row> read_reference(const std::string& name) {
  const char* folder = std::getenv("TINCT_TEST_DATA");
  if (folder == nullptr)
    FAIL("TINCT_TEST_DATA is not set: run through ctest (fixture colour_reference)");
  const std::string path = std::string(folder) + "/" + name;
  std::ifstream in(path);
  if (!in) FAIL("cannot read " << path << ": run make_colour_reference.py first (ctest does)");
  std::vector<Row> rows;
  std::string line;
  std::getline(in, line);
  while (std::getline(in, line)) {
    Row row;
    std::stringstream fields(line);
    for (std::string field; std::getline(fields, field, ',');) row.push_back(field);
    rows.push_back(row);
  }
  return rows;
}

double number(const std::string& text) { return std::strtod(text.c_str(), nullptr); }

struct ReferenceArray {
  std::string dtype;
  std::vector<double> values;
  std::vector<std::pair<double, double>> percentiles;  // (p, np.percentile)
};

std::map<std::string, ReferenceArray> read_percentile_reference() {
  std::map<std::string, ReferenceArray> arrays;
  for (const Row& row : read_reference("percentile_reference.csv")) {
    REQUIRE(row.size() == 5);
    ReferenceArray& array = arrays[row[1]];
    array.dtype = row[2];
    if (row[0] == "value") array.values.push_back(number(row[4]));
    else array.percentiles.emplace_back(number(row[3]), number(row[4]));
  }
  return arrays;
}

// One bin per integer for integer types (exact); 1001 bins on [0, 1] for floats.
tinct::PercentileHistogram histogram_for(const std::string& dtype) {
  if (dtype == "uint8") return {0, 255, 256};
  if (dtype == "uint16") return {0, 65535, 65536};
  return {0, 1, 1001};
}

}  // namespace

TEST_CASE("colour reference: Lab within 0.03 of skimage rgb2lab on 2000 random colours") {
  const std::vector<Row> rows = read_reference("lab_reference.csv");
  REQUIRE(rows.size() == 2000);
  double worst[3] = {0, 0, 0};
  for (const Row& row : rows) {
    REQUIRE(row.size() == 6);
    const tinct::Lab ours = tinct::srgb_to_lab(number(row[0]), number(row[1]), number(row[2]));
    const double diff[3] = {ours.L - number(row[3]), ours.a - number(row[4]),
                            ours.b - number(row[5])};
    for (int c = 0; c < 3; ++c) worst[c] = std::max(worst[c], std::fabs(diff[c]));
  }
  INFO("max |ours - skimage|: L " << worst[0] << ", a " << worst[1] << ", b " << worst[2]);
  CHECK(worst[0] <= 0.03);
  CHECK(worst[1] <= 0.03);
  CHECK(worst[2] <= 0.03);
}

TEST_CASE("colour reference: fast-path codes within one code of skimage's encoded Lab") {
  const std::vector<Row> rows = read_reference("lab_reference.csv");
  const std::size_t n = rows.size();
  std::vector<float> r(n), g(n), b(n);
  std::vector<std::uint8_t> L(n), a(n), bb(n);
  for (std::size_t i = 0; i < n; ++i) {
    r[i] = static_cast<float>(number(rows[i][0]));
    g[i] = static_cast<float>(number(rows[i][1]));
    b[i] = static_cast<float>(number(rows[i][2]));
  }
  tinct::srgb_to_lab_codes(r.data(), g.data(), b.data(), n, L.data(), a.data(), bb.data());
  int worst = 0;
  for (std::size_t i = 0; i < n; ++i) {
    const tinct::LabCode theirs =
        tinct::encode_lab({number(rows[i][3]), number(rows[i][4]), number(rows[i][5])});
    worst = std::max({worst, std::abs(L[i] - theirs.L), std::abs(a[i] - theirs.a),
                      std::abs(bb[i] - theirs.b)});
  }
  INFO("max code difference " << worst);
  CHECK(worst <= 1);
}

TEST_CASE("colour reference: percentiles of integer data equal np.percentile exactly") {
  const auto arrays = read_percentile_reference();
  REQUIRE(arrays.size() >= 5);
  for (const auto& [name, array] : arrays) {
    tinct::PercentileHistogram histogram = histogram_for(array.dtype);
    for (double v : array.values) histogram.add(v);
    REQUIRE(histogram.count() == static_cast<std::int64_t>(array.values.size()));
    REQUIRE(!array.percentiles.empty());
    for (const auto& [p, theirs] : array.percentiles) {
      INFO(name << " (" << array.values.size() << " values) at p = " << p);
      if (array.dtype == "float64") {
        CHECK(std::fabs(histogram.percentile(p) - theirs) <= 0.001);  // one bin width
      } else {
        CHECK(histogram.percentile(p) == theirs);
      }
    }
  }
}
