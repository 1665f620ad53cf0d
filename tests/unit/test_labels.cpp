#include <catch2/catch.hpp>

#include <cmath>

#include "labels/csv_table.hpp"
#include "labels/label_drops.hpp"
#include "labels/label_matcher.hpp"
#include "labels/label_reader.hpp"
#include "raster/crs.hpp"
#include "raster/point_transform.hpp"
#include "labels/polygon_sampler.hpp"
#include "temp_folder.hpp"
#include "util/error.hpp"

using Catch::Matchers::Contains;
using tinct::testing::TempFolder;

namespace {

struct Expected {
  double lon, lat;
  const char* target;
  double easting, northing;
};

}  // namespace

TEST_CASE("points reach UTM as PROJ's cs2cs puts them, to 1 mm") {
  // Source: REFERENCES.md section 7, computed with PROJ 9.1.1 cs2cs (Debian proj-bin)
  // and GDAL 3.6.2 gdaltransform, which agree to 0.1 mm.
  const Expected cases[] = {
      {9, 48, "EPSG:32632", 500000.000, 5316300.225},          // cs2cs, section 7
      {7.4474, 46.948, "EPSG:32632", 381849.182, 5200555.482}, // cs2cs, section 7
      {12, 55, "EPSG:32632", 691875.632, 6098907.825},         // cs2cs, section 7
      {9, 0, "EPSG:32632", 500000.000, 0.000},                 // cs2cs, section 7
      {-34.9, -8, "EPSG:31985", 290584.398, 9115218.773},      // cs2cs, section 7 (L7 col 63 row 194)
      {-34.85, -7.96, "EPSG:31985", 296077.375, 9119668.180},  // cs2cs, section 7 (L7 col 256 row 38)
      {-33, -8, "EPSG:31985", 500000.000, 9115702.149},        // cs2cs, section 7 (central meridian)
  };
  for (const auto& c : cases) {
    const tinct::PointTransform transform("EPSG:4326", c.target);
    double x = c.lon, y = c.lat;  // traditional GIS order: x = longitude
    REQUIRE(transform.apply(x, y));
    INFO(c.lon << ", " << c.lat << " -> " << c.target);
    CHECK(std::fabs(x - c.easting) < 1e-3);
    CHECK(std::fabs(y - c.northing) < 1e-3);
  }
}

TEST_CASE("the inverse transform and a WKT source follow the same axis order") {
  // Source: REFERENCES.md section 7 (cs2cs): L7's upper-left corner (288776.25, 9120760.75)
  // in EPSG:31985 is lat -7.94982211, lon -34.91616554.
  const std::string wkt = tinct::crs_as_wkt("EPSG:31985", "test CRS");
  const tinct::PointTransform transform(wkt, "EPSG:4326");
  double x = 288776.25, y = 9120760.75;
  REQUIRE(transform.apply(x, y));
  CHECK(std::fabs(x - -34.91616554) < 1e-8);
  CHECK(std::fabs(y - -7.94982211) < 1e-8);
  CHECK(tinct::PointTransform("EPSG:32632", "EPSG:32632").identity());
  CHECK_THROWS_WITH(tinct::PointTransform("EPSG:99999999", "EPSG:4326"), Contains("is not a CRS OGR can read"));
}

TEST_CASE("a chip is centred on the label's pixel and must lie wholly in the grid") {
  tinct::TargetGrid grid;
  grid.geotransform = {1000, 10, 0, 2000, 0, -10};  // 100 x 50 pixels of 10 m
  grid.width = 100;
  grid.height = 50;
  auto chip = tinct::chip_around(grid, 1000 + 40 * 10 + 3, 2000 - 20 * 10 - 7, 8);  // in pixel col 40, row 20
  REQUIRE(chip);
  CHECK(chip->col == 36);  // pixel 40 is the chip's column 4 = size/2
  CHECK(chip->row == 16);
  chip = tinct::chip_around(grid, 1000 + 4 * 10, 2000 - 4 * 10, 8);  // pixel (4, 4): chip at (0, 0)
  REQUIRE(chip);
  CHECK((chip->col == 0 && chip->row == 0));
  CHECK_FALSE(tinct::chip_around(grid, 1000 + 3 * 10 + 9.99, 1995, 8));  // pixel col 3: one column short
  CHECK(tinct::chip_around(grid, 1000 + 96 * 10, 2000 - 46 * 10, 8));    // last full chip: cols 92..99
  CHECK_FALSE(tinct::chip_around(grid, 1000 + 97 * 10, 2000 - 46 * 10, 8));
  CHECK_FALSE(tinct::chip_around(grid, 999, 1990, 8));                     // left of the grid
  chip = tinct::chip_around(grid, 1000 + 40 * 10 + 5, 2000 - 20 * 10 - 5, 9);  // odd size: pixel 40 is column 4
  REQUIRE(chip);
  CHECK(chip->col == 36);
}

TEST_CASE("candidates are tried nearest in date first, ties in config order, none beyond max_days") {
  std::vector<tinct::SceneChoice> covering = {{0, 12, {}}, {1, 5, {}}, {2, 31, {}}, {3, 5, {}}, {4, 30, {}}};
  const auto ordered = tinct::order_candidates(covering, 30);
  REQUIRE(ordered.size() == 4);
  CHECK(ordered[0].scene == 1);
  CHECK(ordered[1].scene == 3);
  CHECK(ordered[2].scene == 0);
  CHECK(ordered[3].scene == 4);  // 30 days is within max_days 30
  CHECK(tinct::order_candidates(covering, -1).size() == 5);
  CHECK(tinct::order_candidates(covering, 4).empty());
}

TEST_CASE("a CSV table keeps the line each row starts on, through quotes and line breaks") {
  TempFolder folder;
  const auto file = folder.write("sites.csv",
                                 "\xEF\xBB\xBFid,class,note\r\n1,reed,\"a, b\"\r\n\r\n2,\"open \"\"water\"\"\",\"two\nlines\"\n"
                                 "3,reed,\n");
  const tinct::CsvTable table = tinct::read_csv_table(file);
  REQUIRE(table.header == std::vector<std::string>{"id", "class", "note"});
  REQUIRE(table.rows.size() == 3);
  CHECK(table.rows[0].line == 2);
  CHECK(table.rows[0].fields[2] == "a, b");
  CHECK(table.rows[1].line == 4);
  CHECK(table.rows[1].fields[1] == "open \"water\"");
  CHECK(table.rows[1].fields[2] == "two\nlines");
  CHECK(table.rows[2].line == 6);
  CHECK(table.rows[2].fields[2].empty());
  folder.write("short.csv", "a,b\n1,2\n3\n");
  CHECK_THROWS_WITH(tinct::read_csv_table(folder / "short.csv"), Contains("short.csv line 3: 1 fields, the header has 2"));
}

TEST_CASE("CSV labels: dates, coordinates and columns are checked with their line") {
  TempFolder folder;
  tinct::LabelSourceSettings s;
  s.csv = true;
  s.class_column = "habitat";
  s.date_column = "visited";
  s.x_column = "lon";
  s.y_column = "lat";
  s.crs = "EPSG:4326";
  s.source = folder.write("a.csv", "lon,lat,habitat,visited\n9,48,reed,2023-06-12\n9.1,48.1,water,2023-07-01\n");
  tinct::LabelSet set = tinct::read_label_source(s);
  REQUIRE(set.labels.size() == 2);
  CHECK(set.labels[0].id == "2");  // the CSV line
  CHECK(set.labels[0].group == "2");
  CHECK(set.labels[1].date == "2023-07-01");
  CHECK(set.labels[1].x == 9.1);
  CHECK(set.labels[1].where == s.source.string() + " line 3");

  s.source = folder.write("b.csv", "lon,lat,habitat,visited\n9,48,reed,2023-06-12\n9,48,reed,12/06/2023\n");
  CHECK_THROWS_WITH(tinct::read_label_source(s), Contains("b.csv line 3: visited holds \"12/06/2023\", not a date"));
  s.source = folder.write("c.csv", "lon,lat,habitat,visited\n9,north,reed,2023-06-12\n");
  CHECK_THROWS_WITH(tinct::read_label_source(s), Contains("c.csv line 2: lat holds \"north\", not a coordinate"));
  s.source = folder.write("d.csv", "long,lat,habitat,visited\n9,48,reed,2023-06-12\n");
  CHECK_THROWS_WITH(tinct::read_label_source(s), Contains("no column \"lon\" (labels.x)") && Contains("did you mean \"long\"?"));
}

TEST_CASE("classes outside the list are dropped, the default list is the sorted distinct classes") {
  tinct::LabelSet set;
  for (const char* name : {"water", "reed", "bare", "reed"}) {
    set.labels.emplace_back();
    set.labels.back().class_name = name;
  }
  tinct::LabelSet all = set;
  CHECK(tinct::select_classes(all, {}) == std::vector<std::string>{"bare", "reed", "water"});
  CHECK(all.drops.empty());
  CHECK(tinct::select_classes(set, {"water", "reed"}) == std::vector<std::string>{"water", "reed"});
  REQUIRE(set.drops.size() == 1);
  CHECK(set.drops[0].class_name == "bare");
  CHECK(tinct::to_string(set.drops[0].reason) == "class not in the list");
  CHECK(set.labels.size() == 3);
}

TEST_CASE("polygons become seeded points inside them, keeping id and group") {
  tinct::LabelSet set;
  set.crs = "EPSG:32632";
  tinct::LabelRecord square;
  square.id = "p1";
  square.group = "site-a";
  square.class_name = "reed";
  square.shape = tinct::LabelShape::polygon;
  // An L-shaped polygon: the box's upper-right quarter is outside.
  square.polygon_wkt = "POLYGON ((0 0,100 0,100 50,50 50,50 100,0 100,0 0))";
  tinct::LabelRecord sliver = square;
  sliver.id = "p2";
  sliver.polygon_wkt = "POLYGON ((0 0,100 0,100 0,0 0))";
  set.labels = {square, sliver};
  tinct::LabelSet again = set;
  tinct::sample_polygons(set, 5, 7);
  tinct::sample_polygons(again, 5, 7);
  REQUIRE(set.labels.size() == 5);
  for (std::size_t i = 0; i < set.labels.size(); ++i) {
    const auto& p = set.labels[i];
    CHECK(p.shape == tinct::LabelShape::point);
    CHECK(p.id == "p1");
    CHECK(p.group == "site-a");
    CHECK(p.sample == static_cast<int>(i) + 1);
    CHECK((p.x > 0 && p.x < 100 && p.y > 0 && p.y < 100 && !(p.x > 50 && p.y > 50)));
    CHECK((p.x == again.labels[i].x && p.y == again.labels[i].y));  // seeded
  }
  REQUIRE(set.drops.size() == 1);
  CHECK(set.drops[0].id == "p2");
  CHECK(set.drops[0].reason == tinct::DropReason::no_point_in_polygon);
}

TEST_CASE("the drop report sits beside the store and quotes fields as RFC 4180 asks") {
  CHECK(tinct::drop_report_path("stores/a.labels") == "stores/a.labels.dropped.csv");
  CHECK(tinct::drop_report_path("stores/a.labels/") == "stores/a.labels.dropped.csv");
  const std::vector<tinct::LabelDrop> drops = {
      {"7", "reed", tinct::DropReason::masked, "scene a: the label's pixel is masked"},
      {"8", "open, \"deep\"", tinct::DropReason::outside, "x"}};
  CHECK(tinct::drop_report_csv(drops) ==
        "id,class,reason,detail\n7,reed,masked,scene a: the label's pixel is masked\n"
        "8,\"open, \"\"deep\"\"\",outside all scenes,x\n");
  CHECK(tinct::describe_counts(tinct::count_reasons(drops)) == "1 outside all scenes, 1 masked");
}
