// Pixel baselines: features read off small label stores written by the store writer (values
// worked out by hand below), class balancing, and the classifiers' contract (probabilities,
// absent classes, seeds). Agreement with scikit-learn on real data is a reference test
// (tests/reference/baselines_l7_vs_sklearn.py).
#include <catch2/catch.hpp>

#include <algorithm>
#include <cmath>
#include <map>
#include <numeric>
#include <random>
#include <set>
#include <vector>

#include "baselines/baseline_arm.hpp"
#include "baselines/class_balance.hpp"
#include "baselines/feature_scaling.hpp"
#include "baselines/logistic_regression.hpp"
#include "baselines/pixel_features.hpp"
#include "baselines/random_forest.hpp"
#include "batches/chip_collection.hpp"
#include "chips/store_writer.hpp"
#include "temp_folder.hpp"
#include "util/error.hpp"

namespace fs = std::filesystem;
using Catch::Matchers::Contains;
using Catch::Matchers::WithinAbs;
using tinct::testing::TempFolder;

namespace {

struct LabelChip {
  std::string label;
  std::vector<std::uint16_t> u16;  // (bands, size, size); empty for a float32 store
  std::vector<float> f32;
  std::vector<std::uint8_t> valid;  // (size, size)
};

// A label store of `chips`, bands "nir" and "swir" with the given storage, scale and offset.
fs::path write_store(const fs::path& path, int size, tinct::StorageType storage, double scale, double offset,
                     const std::vector<LabelChip>& chips, std::vector<std::string> classes = {"dry", "wet"}) {
  tinct::StoreLayout layout;
  layout.kind = tinct::StoreKind::labels;
  layout.chip_size = size;
  layout.has_colour = false;
  layout.storage = storage;
  layout.bands = {{"nir", storage, scale, offset}, {"swir", storage, scale, offset}};
  tinct::StoreWriter writer(path, layout, false);
  for (std::size_t i = 0; i < chips.size(); ++i) {
    tinct::ChipRecord record;
    record.index = static_cast<std::int64_t>(i);
    record.scene = "s";
    record.x = 30.0 * static_cast<double>(i);
    record.date = "2026-01-01";
    record.valid_fraction = 1;
    record.block = "0_0";
    record.label = chips[i].label;
    record.group = record.source_id = "site" + std::to_string(i);
    const void* bands = chips[i].u16.empty() ? static_cast<const void*>(chips[i].f32.data()) : chips[i].u16.data();
    writer.add(record, bands, nullptr, chips[i].valid.data());
  }
  tinct::StoreManifest header;
  header.pixel_size = 30;
  header.classes = std::move(classes);
  header.scenes = {{"s", "scene.tif", "2026-01-01", "LOCAL_CS[\"test\"]", {}}};
  writer.finish(header);
  return path;
}

// Stored value of band b at pixel p (row * size + col): 100 (b + 1) + p.
LabelChip ramp_chip(int size, const std::string& label) {
  LabelChip chip{label, {}, {}, std::vector<std::uint8_t>(static_cast<std::size_t>(size * size), 1)};
  for (int b = 0; b < 2; ++b) {
    for (int p = 0; p < size * size; ++p) chip.u16.push_back(static_cast<std::uint16_t>(100 * (b + 1) + p));
  }
  return chip;
}

std::vector<tinct::ChipRef> refs(int first, int count) {
  std::vector<tinct::ChipRef> result;
  for (int i = first; i < first + count; ++i) result.push_back({0, i});
  return result;
}

}  // namespace

TEST_CASE("pixel features are the label pixel and its 3 x 3 mean over valid pixels, in reflectance") {
  const TempFolder folder;
  // 5 x 5 chips: the label pixel is (2, 2), value index 12; its window holds indices
  // 6 7 8 / 11 12 13 / 16 17 18, of which 6 (row 1, col 1) and 17 (row 3, col 2) are invalid.
  LabelChip chip = ramp_chip(5, "wet");
  chip.valid[6] = chip.valid[17] = 0;
  const tinct::ChipCollection chips({write_store(folder / "a.labels", 5, tinct::StorageType::uint16, 0.5, -10,
                                                 {ramp_chip(5, "dry"), chip})});
  const tinct::FeatureTable table = tinct::pixel_features(chips, refs(0, 2), tinct::FeatureSet::pixel_and_3x3);
  REQUIRE(table.names == std::vector<std::string>{"nir", "swir", "nir_3x3", "swir_3x3"});
  REQUIRE(table.rows() == 2);
  // reflectance = (stored + offset) * scale
  CHECK(table.row(0)[0] == static_cast<float>((100 + 12 - 10) * 0.5));
  CHECK(table.row(0)[1] == static_cast<float>((200 + 12 - 10) * 0.5));
  CHECK_THAT(table.row(0)[2], WithinAbs((100 + 12 - 10) * 0.5, 1e-5));  // full window: mean index 12
  CHECK_THAT(table.row(1)[2], WithinAbs((100 + 85.0 / 7 - 10) * 0.5, 1e-5));  // (7+8+11+12+13+16+18)/7
  CHECK_THAT(table.row(1)[3], WithinAbs((200 + 85.0 / 7 - 10) * 0.5, 1e-5));

  const auto pixel = tinct::pixel_features(chips, refs(1, 1), tinct::FeatureSet::pixel);
  CHECK(pixel.names == std::vector<std::string>{"nir", "swir"});
  CHECK(pixel.values == std::vector<float>{table.row(1)[0], table.row(1)[1]});
  const auto mean = tinct::pixel_features(chips, refs(1, 1), tinct::FeatureSet::pixel3x3);
  CHECK(mean.names == std::vector<std::string>{"nir_3x3", "swir_3x3"});
  CHECK(mean.values == std::vector<float>{table.row(1)[2], table.row(1)[3]});
}

TEST_CASE("pixel features of even and edge-sized chips take pixel (size/2, size/2) and clip the window") {
  const TempFolder folder;
  // 4 x 4: label pixel (2, 2) = index 10, window rows and columns 1..3 inside the chip.
  const tinct::ChipCollection even({write_store(folder / "even.labels", 4, tinct::StorageType::uint16, 1, 0,
                                                {ramp_chip(4, "dry")})});
  const auto four = tinct::pixel_features(even, refs(0, 1), tinct::FeatureSet::pixel_and_3x3);
  CHECK(four.row(0)[0] == 110.0f);
  CHECK_THAT(four.row(0)[2], WithinAbs((5 + 6 + 7 + 9 + 10 + 11 + 13 + 14 + 15) / 9.0 + 100, 1e-4));
  // 2 x 2, float32: label pixel (1, 1) = index 3; the window's row 2 and column 2 lie outside.
  LabelChip small{"wet", {}, {0.25f, 0.5f, 1.0f, 2.0f, -1.0f, -2.0f, -3.0f, -4.0f}, {1, 1, 1, 1}};
  const tinct::ChipCollection edge({write_store(folder / "edge.labels", 2, tinct::StorageType::float32, 2, 1,
                                                {small})});
  const auto two = tinct::pixel_features(edge, refs(0, 1), tinct::FeatureSet::pixel_and_3x3);
  CHECK(two.row(0)[0] == (2.0f + 1) * 2);
  CHECK(two.row(0)[1] == (-4.0f + 1) * 2);
  CHECK_THAT(two.row(0)[2], WithinAbs((0.25 + 0.5 + 1 + 2) / 4 * 2 + 2, 1e-6));
}

TEST_CASE("a chip whose label pixel is invalid is refused, naming the store, the chip and the fix") {
  const TempFolder folder;
  LabelChip hole = ramp_chip(5, "wet");
  hole.valid[12] = 0;
  const tinct::ChipCollection chips({write_store(folder / "hole.labels", 5, tinct::StorageType::uint16, 1, 0,
                                                 {ramp_chip(5, "dry"), hole})});
  CHECK_NOTHROW(tinct::pixel_features(chips, refs(0, 1), tinct::FeatureSet::pixel));
  CHECK_THROWS_WITH(tinct::pixel_features(chips, refs(0, 2), tinct::FeatureSet::pixel3x3),
                    Contains("hole.labels") && Contains("chip 1") && Contains("site1") &&
                        Contains("chips.centre_valid: true"));
  CHECK_THROWS_WITH(tinct::feature_set_from_name("pixels", "study.yaml baselines.features"),
                    Contains("study.yaml baselines.features") && Contains("pixel_and_3x3"));
  CHECK(tinct::feature_set_from_name("pixel3x3", "x") == tinct::FeatureSet::pixel3x3);
}

TEST_CASE("balanced class weights and balanced resampling") {
  const std::vector<int> labels{0, 0, 0, 0, 1, 1, 2};
  const auto weights = tinct::balanced_class_weights(labels, 4);
  CHECK_THAT(weights[0], WithinAbs(7.0 / (4 * 4), 1e-12));  // n / (K n_c)
  CHECK_THAT(weights[1], WithinAbs(7.0 / (4 * 2), 1e-12));
  CHECK_THAT(weights[2], WithinAbs(7.0 / (4 * 1), 1e-12));
  CHECK(weights[3] == 0.0);

  // Whole multiples: every row of class c appears n_max / n_c times.
  const auto rows = tinct::balanced_resample(labels, 4, 3);
  std::map<int, int> copies;
  for (int row : rows) ++copies[row];
  CHECK(copies == std::map<int, int>{{0, 1}, {1, 1}, {2, 1}, {3, 1}, {4, 2}, {5, 2}, {6, 4}});

  // A remainder: class 1 has 2 rows for a largest class of 3, so one of them is drawn twice.
  const std::vector<int> uneven{0, 0, 0, 1, 1};
  std::set<int> doubled;
  for (std::uint64_t seed = 0; seed < 16; ++seed) {
    const auto picked = tinct::balanced_resample(uneven, 2, seed);
    REQUIRE(picked.size() == 6);
    CHECK(std::count(picked.begin(), picked.end(), 3) + std::count(picked.begin(), picked.end(), 4) == 3);
    doubled.insert(std::count(picked.begin(), picked.end(), 3) == 2 ? 3 : 4);
    CHECK(picked == tinct::balanced_resample(uneven, 2, seed));
  }
  CHECK(doubled == std::set<int>{3, 4});  // the seed decides which
}

TEST_CASE("feature scaling uses the training mean and population sd and leaves constant features unscaled") {
  tinct::FeatureTable train{{"a", "b"}, {1, 5, 2, 5, 3, 5, 6, 5}};
  const auto scaling = tinct::fit_scaling(train);
  CHECK_THAT(scaling.mean[0], WithinAbs(3.0, 1e-12));
  CHECK_THAT(scaling.sd[0], WithinAbs(std::sqrt(3.5), 1e-12));  // (4 + 1 + 0 + 9) / 4
  CHECK(scaling.sd[1] == 1.0);
  tinct::FeatureTable test{{"a", "b"}, {3 + std::sqrt(3.5f), 7}};
  tinct::apply_scaling(scaling, test);
  CHECK_THAT(test.values[0], WithinAbs(1.0, 1e-6));
  CHECK(test.values[1] == 2.0f);
}

namespace {

// Three overlapping classes in two features: centres (0, 0), (1.5, 0), (0, 1.5), sd 1.
void blobs(int per_class, unsigned seed, tinct::FeatureTable& table, std::vector<int>& labels) {
  std::mt19937 random(seed);
  std::normal_distribution<float> noise(0, 1);
  table.names = {"a", "b"};
  for (int i = 0; i < 3 * per_class; ++i) {
    const int c = i % 3;
    table.values.push_back((c == 1 ? 1.5f : 0.0f) + noise(random));
    table.values.push_back((c == 2 ? 1.5f : 0.0f) + noise(random));
    labels.push_back(c);
  }
}

void check_rows_are_distributions(const std::vector<std::vector<double>>& p, std::size_t rows, std::size_t classes) {
  REQUIRE(p.size() == rows);
  for (const auto& row : p) {
    REQUIRE(row.size() == classes);
    CHECK_THAT(std::accumulate(row.begin(), row.end(), 0.0), WithinAbs(1.0, 1e-6));
    for (double v : row) CHECK((v >= 0 && v <= 1));
  }
}

}  // namespace

TEST_CASE("the random forest gives vote fractions, repeats itself for a seed and differs for another") {
  tinct::FeatureTable train, test;
  std::vector<int> labels, truth;
  blobs(20, 1, train, labels);
  blobs(30, 2, test, truth);
  const tinct::RandomForestSettings settings;
  const auto p = tinct::random_forest_probabilities(train, labels, 4, test, settings, 7);
  check_rows_are_distributions(p, 90, 4);
  int correct = 0;
  for (std::size_t i = 0; i < p.size(); ++i) {
    CHECK(p[i][3] == 0.0);  // class 3 has no training rows
    const double votes = p[i][0] * settings.trees;
    CHECK_THAT(votes, WithinAbs(std::round(votes), 1e-9));  // whole votes
    correct += std::max_element(p[i].begin(), p[i].end()) - p[i].begin() == truth[i];
  }
  CHECK(correct > 45);  // overlapping blobs: well above chance (30 of 90), well below 90
  CHECK(p == tinct::random_forest_probabilities(train, labels, 4, test, settings, 7));
  CHECK(p != tinct::random_forest_probabilities(train, labels, 4, test, settings, 8));
  tinct::RandomForestSettings bad;
  bad.min_split = 1;
  CHECK_THROWS_WITH(tinct::random_forest_probabilities(train, labels, 4, test, bad, 7), Contains("min_split"));
}

TEST_CASE("the logistic regression gives one-vs-rest probabilities and needs two classes") {
  tinct::FeatureTable train, test;
  std::vector<int> labels, truth;
  blobs(20, 1, train, labels);
  blobs(30, 2, test, truth);
  const tinct::LogisticSettings settings;
  const auto p = tinct::logistic_regression_probabilities(train, labels, 4, test, settings, 0);
  check_rows_are_distributions(p, 90, 4);
  int correct = 0;
  for (std::size_t i = 0; i < p.size(); ++i) {
    CHECK(p[i][3] == 0.0);
    correct += std::max_element(p[i].begin(), p[i].end()) - p[i].begin() == truth[i];
  }
  CHECK(correct > 45);
  CHECK(p == tinct::logistic_regression_probabilities(train, labels, 4, test, settings, 0));

  // Two classes: one model, its sigmoid for the higher class index and the complement.
  tinct::FeatureTable two{{"a", "b"}, {}};
  std::vector<int> two_labels;
  for (int i = 0; i < train.rows(); ++i) {
    if (labels[i] == 1) continue;
    two.values.insert(two.values.end(), train.row(i), train.row(i) + 2);
    two_labels.push_back(labels[i]);
  }
  const auto q = tinct::logistic_regression_probabilities(two, two_labels, 3, test, settings, 0);
  check_rows_are_distributions(q, 90, 3);
  for (int i = 0; i < test.rows(); ++i) {
    CHECK(q[i][1] == 0.0);
    // Classes 0 and 2 differ in b only (centres b = 0 and 1.5): clear-cut far from b = 0.75.
    const float b = test.row(i)[1];
    if (std::abs(b - 0.75f) > 1.5f) CHECK((q[i][2] > q[i][0]) == (b > 0.75f));
  }

  const std::vector<int> one(static_cast<std::size_t>(train.rows()), 2);
  CHECK_THROWS_WITH(tinct::logistic_regression_probabilities(train, one, 3, test, settings, 0),
                    Contains("one class only"));
}

TEST_CASE("a baseline arm predicts the test chips in order, with truth, argmax and probabilities, repeatably") {
  const TempFolder folder;
  // 3 x 3 chips of one class each; nir at the label pixel overlaps between the classes.
  std::mt19937 random(5);
  std::uniform_int_distribution<int> spread(0, 300);
  std::vector<LabelChip> chips;
  for (int i = 0; i < 60; ++i) {
    const bool wet = i % 2 == 1;
    LabelChip chip{wet ? "wet" : "dry", {}, {}, std::vector<std::uint8_t>(9, 1)};
    for (int p = 0; p < 18; ++p) chip.u16.push_back(static_cast<std::uint16_t>((wet ? 1200 : 1000) + spread(random)));
    chips.push_back(chip);
  }
  const tinct::ChipCollection collection(
      {write_store(folder / "arm.labels", 3, tinct::StorageType::uint16, 0.0001, 0, chips)});
  const auto train = refs(0, 20), test = refs(20, 40);
  for (const auto kind : {tinct::BaselineKind::random_forest, tinct::BaselineKind::logistic_regression}) {
    tinct::BaselineSettings settings;
    settings.kind = kind;
    settings.seed = 11;
    const tinct::BaselinePredictions result = tinct::run_baseline(collection, train, test, settings);
    REQUIRE(result.chips.size() == test.size());
    REQUIRE(result.predicted.size() == test.size());
    int correct = 0;
    for (std::size_t i = 0; i < test.size(); ++i) {
      CHECK(result.chips[i].chip == test[i].chip);
      CHECK(result.truth[i] == collection.class_of(test[i]));
      const auto& row = result.probabilities[i];
      CHECK(result.predicted[i] == std::max_element(row.begin(), row.end()) - row.begin());
      correct += result.predicted[i] == result.truth[i];
    }
    CHECK(correct >= 24);  // of 40; the classes overlap by a third of their range
    const tinct::BaselinePredictions again = tinct::run_baseline(collection, train, test, settings);
    CHECK(again.predicted == result.predicted);
    CHECK(again.probabilities == result.probabilities);
    if (kind == tinct::BaselineKind::random_forest) {
      settings.seed = 12;
      CHECK(tinct::run_baseline(collection, train, test, settings).probabilities != result.probabilities);
    }
  }
  tinct::BaselineSettings settings;
  CHECK_THROWS_WITH(tinct::run_baseline(collection, {}, test, settings), Contains("no training chips"));
  CHECK_THROWS_WITH(tinct::run_baseline(collection, train, {}, settings), Contains("no test chips"));
  CHECK(tinct::baseline_kind_from_name("logistic_regression", "x") == tinct::BaselineKind::logistic_regression);
  CHECK_THROWS_WITH(tinct::baseline_kind_from_name("svm", "study.yaml arms[2].baseline"),
                    Contains("study.yaml arms[2].baseline") && Contains("random_forest or logistic_regression"));
}
