#include <catch2/catch.hpp>

#include <cmath>

#include "raster/survey.hpp"
#include "raster/survey_report.hpp"
#include "temp_folder.hpp"
#include "test_rasters.hpp"
#include "util/error.hpp"

using Catch::Matchers::Contains;
using tinct::testing::TempFolder;
using tinct::testing::TestRasterSpec;

TEST_CASE("survey reports grid, CRS and exact statistics of a ramp") {
  TempFolder folder;
  TestRasterSpec spec;  // value = 1000*b + 10*row + col on 8x6
  spec.bands = 2;
  const auto file = tinct::testing::write_test_raster(folder / "ramp.tif", spec);
  const auto survey = tinct::survey_raster(file);
  CHECK(survey.driver == "GTiff");
  CHECK(survey.width == 8);
  CHECK(survey.height == 6);
  CHECK(survey.epsg == 32632);
  CHECK(survey.geotransform[0] == 500000);
  CHECK(survey.geotransform[5] == -10);
  REQUIRE(survey.bands.size() == 2);
  const auto& b1 = survey.bands[0];
  CHECK(b1.info.data_type == "UInt16");
  CHECK(b1.min == 1000);
  CHECK(b1.max == 1057);
  // Mean of 10*r + c over r < 6, c < 8 is 10*2.5 + 3.5; population variance is the sum of
  // the independent parts: 100*var(r) + var(c) = 100*35/12 + 63/12 (hand computation).
  CHECK(b1.mean == Approx(1028.5).epsilon(1e-12));
  CHECK(b1.std == Approx(std::sqrt(100.0 * 35 / 12 + 63.0 / 12)).epsilon(1e-12));
  CHECK(b1.valid_fraction == 1.0);
  CHECK(survey.bands[1].mean == Approx(2028.5));
}

TEST_CASE("survey leaves nodata pixels out of the statistics and counts them") {
  TempFolder folder;
  TestRasterSpec spec;
  spec.width = 4;
  spec.height = 4;
  spec.nodata = 0;
  spec.value = [](int, int c, int r) { return c == 0 ? 0.0 : double(c + 4 * r); };
  const auto file = tinct::testing::write_test_raster(folder / "holes.tif", spec);
  const auto band = tinct::survey_raster(file).bands[0];
  CHECK(band.info.nodata == 0.0);
  CHECK(band.valid_count == 12);
  CHECK(band.valid_fraction == 0.75);
  CHECK(band.min == 1);
  CHECK(band.max == 15);
  CHECK(band.mean == Approx(8.0));  // values c + 4r for c = 1..3, r = 0..3
}

TEST_CASE("survey of a missing file, a non-raster and a raster without CRS fails clearly") {
  TempFolder folder;
  CHECK_THROWS_WITH(tinct::survey_raster(folder / "nope.tif"), Contains("file not found"));
  const auto text = folder.write("notes.txt", "not a raster\n");
  CHECK_THROWS_WITH(tinct::survey_raster(text), Contains("not a readable raster"));
  TestRasterSpec spec;
  spec.epsg = 0;
  const auto file = tinct::testing::write_test_raster(folder / "nocrs.tif", spec);
  CHECK_THROWS_WITH(tinct::survey_raster(file), Contains("has no CRS"));
}

TEST_CASE("survey JSON carries the EPSG code and per-band figures") {
  TempFolder folder;
  const auto file = tinct::testing::write_test_raster(folder / "ramp.tif", TestRasterSpec{});
  const std::string json = tinct::survey_json(tinct::survey_raster(file)).dump();
  CHECK_THAT(json, Contains("\"epsg\":32632"));
  CHECK_THAT(json, Contains("\"min\":1000"));
  const std::string table = tinct::survey_table(tinct::survey_raster(file));
  CHECK_THAT(table, Contains("EPSG:32632"));
  CHECK_THAT(table, Contains("UInt16"));
}
