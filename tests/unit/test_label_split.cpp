// Splits and budgets that hold: the buffer between every two sides (and its boundary
// distance), block ids floored in a geographic CRS west of Greenwich, validation_fraction,
// the budget's stratification per class, split.seed, and sides of one class refused.
// Stores are tiny label stores written here (invented points, for tests only).
#include <catch2/catch.hpp>

#include <cmath>
#include <map>
#include <set>
#include <string>
#include <vector>

#include "chips/store_writer.hpp"
#include "finetune/label_split.hpp"
#include "temp_folder.hpp"

using tinct::testing::TempFolder;

namespace {

struct Point {
  double x, y;
  std::string label;
};

// EPSG:4326 as WKT1 (GDAL's osr ExportToWkt of ImportFromEPSG(4326), abridged to what OGR needs).
const char* const kWgs84 =
    "GEOGCS[\"WGS 84\",DATUM[\"WGS_1984\",SPHEROID[\"WGS 84\",6378137,298.257223563]],PRIMEM[\"Greenwich\",0],"
    "UNIT[\"degree\",0.0174532925199433],AUTHORITY[\"EPSG\",\"4326\"]]";

std::filesystem::path write_points(const std::filesystem::path& path, const std::vector<Point>& points,
                                   const std::vector<std::string>& classes, const std::string& crs = kWgs84) {
  tinct::StoreLayout layout;
  layout.kind = tinct::StoreKind::labels;
  layout.chip_size = 4;
  layout.has_colour = false;
  layout.bands = {{"nir", tinct::StorageType::uint16, 0.001, 0}};
  tinct::StoreWriter writer(path, layout, false);
  std::vector<std::uint16_t> bands(16, 100);
  std::vector<std::uint8_t> valid(16, 1);
  for (std::size_t i = 0; i < points.size(); ++i) {
    tinct::ChipRecord record;
    record.index = static_cast<std::int64_t>(i);
    record.scene = "s";
    record.x = points[i].x;
    record.y = points[i].y;
    record.date = "2026-01-01";
    record.valid_fraction = 1;
    record.block = "0_0";
    record.label = points[i].label;
    record.group = "g" + std::to_string(i);
    record.source_id = "p" + std::to_string(i);
    bands[0] = static_cast<std::uint16_t>(i);
    writer.add(record, bands.data(), nullptr, valid.data());
  }
  tinct::StoreManifest header;
  header.kind = tinct::StoreKind::labels;
  header.pixel_size = 10;
  header.classes = classes;
  header.crs = crs;
  header.scenes = {{"s", "scene.tif", "2026-01-01", crs, {}}};
  writer.finish(header);
  return path;
}

// side x side points `spacing` apart from (x0, y0); classes cycle through `classes` by index.
std::vector<Point> grid(int side, double spacing, double x0, double y0, const std::vector<std::string>& classes) {
  std::vector<Point> points;
  for (int i = 0; i < side * side; ++i) {
    points.push_back({x0 + spacing * (i % side), y0 + spacing * (i / side), classes[(i + i / side) % classes.size()]});
  }
  return points;
}

std::pair<double, double> at(const tinct::ChipCollection& chips, const tinct::ChipRef& ref) {
  const auto r = chips.store(ref.store).record(ref.chip);
  return {r.x, r.y};
}

double closest(const tinct::ChipCollection& chips, const std::vector<tinct::ChipRef>& a,
               const std::vector<tinct::ChipRef>& b) {
  double best = INFINITY;
  for (const auto& p : a) {
    for (const auto& q : b) {
      const auto [px, py] = at(chips, p);
      const auto [qx, qy] = at(chips, q);
      best = std::min(best, std::hypot(px - qx, py - qy));
    }
  }
  return best;
}

std::vector<tinct::ChipRef> joined(std::vector<tinct::ChipRef> a, const std::vector<tinct::ChipRef>& b) {
  a.insert(a.end(), b.begin(), b.end());
  return a;
}

std::set<std::int64_t> ids(const std::vector<tinct::ChipRef>& refs) {
  std::set<std::int64_t> out;
  for (const auto& ref : refs) out.insert(ref.chip);
  return out;
}

std::map<int, int> per_class(const tinct::ChipCollection& chips, const std::vector<tinct::ChipRef>& refs) {
  std::map<int, int> counts;
  for (const auto& ref : refs) ++counts[chips.class_of(ref)];
  return counts;
}

}  // namespace

TEST_CASE("the buffer holds between training and validation and test and keeps chips exactly at its distance") {
  TempFolder folder;
  // A projected-like local grid: 12 x 12 points 100 units apart, two classes.
  const tinct::ChipCollection chips({write_points(folder / "grid.labels", grid(12, 100, 50, 50, {"dry", "wet"}),
                                                  {"dry", "wet"}, "LOCAL_CS[\"test\"]")});
  tinct::SplitSettings settings;
  settings.block_size = 300;  // 4 x 4 blocks of 3 x 3 points
  settings.folds = 4;
  for (int fold = 0; fold < settings.folds; ++fold) {
    settings.fold = fold;
    settings.buffer = 150;
    const tinct::LabelSplit split = tinct::split_labels(chips, settings);
    CHECK(closest(chips, split.train, split.test) >= 150);
    CHECK(closest(chips, split.validation, split.test) >= 150);
    CHECK(closest(chips, split.train, split.validation) >= 150);
    // Every unused chip is there for its reason: a test (or validation) chip closer than the buffer.
    for (const auto& a : split.assignment) {
      if (a.reason == "near_test") CHECK(closest(chips, {a.chip}, split.test) < 150);
      if (a.reason == "near_validation") CHECK(closest(chips, {a.chip}, split.validation) < 150);
    }
    // Boundary: a buffer of exactly the spacing keeps neighbours 100 apart (distance < buffer drops),
    settings.buffer = 100;
    const tinct::LabelSplit exact = tinct::split_labels(chips, settings);
    CHECK(closest(chips, joined(exact.train, exact.validation), exact.test) == 100);
    CHECK(exact.dropped_by_buffer == 0);
    // and a hair more drops them.
    settings.buffer = 100.001;
    const tinct::LabelSplit wider = tinct::split_labels(chips, settings);
    CHECK(wider.dropped_by_buffer > 0);
    CHECK(closest(chips, wider.train, wider.test) >= 100.001);
    CHECK(closest(chips, wider.validation, wider.test) >= 100.001);
    CHECK(closest(chips, wider.train, wider.validation) >= 100.001);
  }
}

TEST_CASE("blocks are floored west of Greenwich in a geographic CRS") {
  TempFolder folder;
  // Longitudes -0.95 .. 0.85 by 0.1, latitudes 51.05 .. 52.85: blocks of 0.25 degrees.
  const tinct::ChipCollection chips(
      {write_points(folder / "wgs84.labels", grid(19, 0.1, -0.95, 51.05, {"reed", "water", "sedge"}),
                    {"reed", "sedge", "water"})});
  tinct::SplitSettings settings;
  settings.block_size = 0.25;
  settings.folds = 3;
  // Expected ids are numpy.floor(x / 0.25) (numpy floors towards minus infinity; a
  // truncating cast gives 0 for -0.05 / 0.25 = -0.2 and -1 for -0.35 / 0.25 = -1.4).
  const std::map<std::int64_t, std::string> expected{
      {0, "-4_204"},   // (-0.95, 51.05): floor(-3.8) = -4, floor(204.2) = 204
      {6, "-2_204"},   // (-0.35, 51.05): floor(-1.4) = -2
      {9, "-1_204"},   // (-0.05, 51.05): floor(-0.2) = -1
      {10, "0_204"},   // (0.05, 51.05): floor(0.2) = 0
      {18, "3_204"}};  // (0.85, 51.05): floor(3.4) = 3
  for (const auto& [chip, unit] : expected) {
    CHECK(tinct::split_unit(chips, {0, chip}, settings) == unit);
  }
  // Chips either side of Greenwich are in different blocks, and no block straddles sides.
  const tinct::LabelSplit split = tinct::split_labels(chips, settings);
  std::set<std::string> test_units;
  for (const auto& ref : split.test) test_units.insert(tinct::split_unit(chips, ref, settings));
  for (const auto& ref : split.train) CHECK(test_units.count(tinct::split_unit(chips, ref, settings)) == 0);
  for (const auto& ref : split.validation) CHECK(test_units.count(tinct::split_unit(chips, ref, settings)) == 0);
}

TEST_CASE("validation_fraction is honoured per class") {
  TempFolder folder;
  const tinct::ChipCollection chips(
      {write_points(folder / "grid.labels", grid(14, 100, 0, 0, {"dry", "wet"}), {"dry", "wet"}, "LOCAL_CS[\"t\"]")});
  tinct::SplitSettings settings;
  settings.method = tinct::SplitMethod::random;  // one chip per unit: the fraction can be met exactly
  settings.folds = 4;
  for (const double fraction : {0.1, 0.25, 0.4, 0.5}) {
    settings.validation_fraction = fraction;
    const tinct::LabelSplit split = tinct::split_labels(chips, settings);
    const auto train = per_class(chips, split.train);
    const auto validation = per_class(chips, split.validation);
    for (int c = 0; c < 2; ++c) {
      const int pool = train.at(c) + validation.at(c);
      CHECK(validation.at(c) == std::lround(fraction * pool));
    }
  }
  // By blocks (4 points each) the share is met to within a block per class.
  settings.method = tinct::SplitMethod::blocks;
  settings.block_size = 200;
  settings.validation_fraction = 0.3;
  const tinct::LabelSplit blocks = tinct::split_labels(chips, settings);
  const double share = static_cast<double>(blocks.validation.size()) /
                       static_cast<double>(blocks.validation.size() + blocks.train.size());
  CHECK(share == Approx(0.3).margin(0.06));
}

TEST_CASE("the budget bounds training plus validation per class and split.seed alone sets the test set") {
  TempFolder folder;
  const std::vector<std::string> classes{"reed", "sedge", "water"};
  const tinct::ChipCollection chips(
      {write_points(folder / "grid.labels", grid(15, 100, 0, 0, classes), classes, "LOCAL_CS[\"t\"]")});
  tinct::SplitSettings settings;
  settings.block_size = 250;
  settings.folds = 3;
  settings.fold = 1;
  settings.seed = 7;
  const tinct::LabelSplit all = tinct::split_labels(chips, settings);
  for (const int n : {3, 5, 8}) {
    tinct::LabelBudget budget;
    budget.per_class = n;
    budget.seed = 11;
    const tinct::LabelSplit split = tinct::split_labels(chips, settings, budget);
    const auto train = per_class(chips, split.train);
    const auto validation = per_class(chips, split.validation);
    for (int c = 0; c < 3; ++c) {
      CHECK(train.at(c) + validation.at(c) == n);  // stratified: exactly n of each class
      CHECK(validation.at(c) >= 1);
      CHECK(train.at(c) >= 1);
    }
    CHECK(ids(split.test) == ids(all.test));  // the budget never changes the test set
    std::int64_t over = 0;
    for (const auto& a : split.assignment) over += a.reason == "over_budget";
    CHECK(over == static_cast<std::int64_t>(all.train.size() + all.validation.size()) - 3 * n);
  }
  tinct::LabelBudget share;
  share.fraction = 0.2;
  const tinct::LabelSplit part = tinct::split_labels(chips, settings, share);
  const auto pool = per_class(chips, joined(all.train, all.validation));
  const auto drawn = per_class(chips, joined(part.train, part.validation));
  for (int c = 0; c < 3; ++c) CHECK(drawn.at(c) == std::lround(0.2 * pool.at(c)));

  // Another budget seed draws other labels from the same pool; the test set stays.
  tinct::LabelBudget first, second;
  first.per_class = second.per_class = 5;
  first.seed = 1;
  second.seed = 2;
  const auto a = tinct::split_labels(chips, settings, first);
  const auto b = tinct::split_labels(chips, settings, second);
  CHECK(ids(a.test) == ids(b.test));
  CHECK(ids(a.train) != ids(b.train));
  // Another split seed deals other folds.
  settings.seed = 8;
  CHECK(ids(tinct::split_labels(chips, settings).test) != ids(all.test));
}

TEST_CASE("every chip has exactly one role and the folds partition the units as GroupKFold does") {
  TempFolder folder;
  const tinct::ChipCollection chips(
      {write_points(folder / "grid.labels", grid(10, 100, 0, 0, {"dry", "wet"}), {"dry", "wet"}, "LOCAL_CS[\"t\"]")});
  tinct::SplitSettings settings;
  settings.block_size = 250;
  settings.folds = 4;
  settings.buffer = 120;
  std::multiset<std::int64_t> tested;
  for (int fold = 0; fold < 4; ++fold) {
    settings.fold = fold;
    const tinct::LabelSplit split = tinct::split_labels(chips, settings);
    REQUIRE(split.assignment.size() == 100);
    std::map<std::string, std::int64_t> roles;
    for (const auto& a : split.assignment) {
      ++roles[tinct::role_name(a.role)];
      CHECK((a.role == tinct::ChipRole::test) == (a.fold == fold));
      CHECK((a.role == tinct::ChipRole::unused) == !a.reason.empty());
    }
    CHECK(roles["train"] == static_cast<std::int64_t>(split.train.size()));
    CHECK(roles["validation"] == static_cast<std::int64_t>(split.validation.size()));
    CHECK(roles["test"] == static_cast<std::int64_t>(split.test.size()));
    CHECK(roles["unused"] == split.dropped_by_buffer);
    for (const auto& ref : split.test) tested.insert(ref.chip);
  }
  CHECK(tested.size() == 100);  // each chip tested once over the folds
  CHECK(std::set<std::int64_t>(tested.begin(), tested.end()).size() == 100);
}

TEST_CASE("a side with fewer than two classes is refused naming the side and the fold") {
  TempFolder folder;
  // "wet" only in the block x >= 500: whichever fold holds it, training or test lacks it.
  std::vector<Point> points = grid(10, 100, 0, 0, {"dry"});
  for (auto& p : points) {
    if (p.x >= 500 && p.y >= 500) p.label = "wet";
  }
  const tinct::ChipCollection chips({write_points(folder / "one.labels", points, {"dry", "wet"}, "LOCAL_CS[\"t\"]")});
  tinct::SplitSettings settings;
  settings.block_size = 500;
  settings.folds = 2;
  int refused = 0;
  for (int fold = 0; fold < 2; ++fold) {
    settings.fold = fold;
    try {
      tinct::split_labels(chips, settings);
    } catch (const std::exception& e) {
      ++refused;
      // Training or test with one class, or validation with none left that training can spare.
      CHECK_THAT(std::string(e.what()), Catch::Matchers::Contains("split of fold " + std::to_string(fold) + " holds") &&
                                            (Catch::Matchers::Contains("one class only") ||
                                             Catch::Matchers::Contains("no chips")));
    }
  }
  CHECK(refused == 2);
  // One class in the whole store: refused too, never a perfect score.
  const tinct::ChipCollection single(
      {write_points(folder / "single.labels", grid(6, 100, 0, 0, {"dry"}), {"dry"}, "LOCAL_CS[\"t\"]")});
  settings.fold = 0;
  settings.block_size = 200;
  CHECK_THROWS_WITH(tinct::split_labels(single, settings), Catch::Matchers::Contains("one class only"));
}
