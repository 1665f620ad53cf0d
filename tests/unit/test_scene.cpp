#include <catch2/catch.hpp>

#include <cmath>

#include "chips/chip_plan.hpp"
#include "raster/scene.hpp"
#include "raster/scene_date.hpp"
#include "raster/target_grid.hpp"
#include "temp_folder.hpp"
#include "test_rasters.hpp"
#include "util/error.hpp"

using Catch::Matchers::Contains;
using tinct::testing::TempFolder;
using tinct::testing::TestRasterSpec;

namespace {

tinct::SensorProfile two_band_profile() {
  tinct::SensorProfile profile;
  profile.name = "test";
  profile.reference_resolution = 10;
  profile.nodata = 0;
  profile.bands = {{"red", 665, 30, 10}, {"swir", 1610, 90, 20}};
  return profile;
}

}  // namespace

TEST_CASE("the shared grid is the intersection of the band files, snapped to the first origin") {
  TempFolder folder;
  TestRasterSpec fine;  // 8 x 6 at 10 m from (500000, 5300000)
  TestRasterSpec coarse;
  coarse.width = 3;
  coarse.height = 3;
  coarse.pixel = 20;
  coarse.origin_x = 500010;  // starts one 10 m pixel later
  const auto a = tinct::Raster::open(tinct::testing::write_test_raster(folder / "a.tif", fine));
  const auto b = tinct::Raster::open(tinct::testing::write_test_raster(folder / "b.tif", coarse));
  const auto grid = tinct::shared_grid({&a, &b}, 10);
  CHECK(grid.geotransform[0] == 500010);
  CHECK(grid.geotransform[3] == 5300000);
  CHECK(grid.width == 6);   // x from 500010 to 500070
  CHECK(grid.height == 6);  // y from 5300000 down to 5299940
  CHECK(grid.x_at(0) == 500015);
  CHECK(tinct::lies_on_grid(a, grid) == false);
}

TEST_CASE("band files in different CRS are refused") {
  TempFolder folder;
  TestRasterSpec other;
  other.epsg = 32633;
  const auto a = tinct::Raster::open(tinct::testing::write_test_raster(folder / "a.tif", TestRasterSpec{}));
  const auto b = tinct::Raster::open(tinct::testing::write_test_raster(folder / "b.tif", other));
  CHECK_THROWS_WITH(tinct::shared_grid({&a, &b}, 10), Contains("CRS differs"));
}

TEST_CASE("a band file whose extent is disjoint from the others is the one named") {
  TempFolder folder;
  TestRasterSpec far;  // 8 x 6 at 10 m, 10 km east of the others
  far.origin_x = 510000;
  const auto a = tinct::Raster::open(tinct::testing::write_test_raster(folder / "a.tif", TestRasterSpec{}));
  const auto b = tinct::Raster::open(tinct::testing::write_test_raster(folder / "b.tif", TestRasterSpec{}));
  const auto odd = tinct::Raster::open(tinct::testing::write_test_raster(folder / "odd.tif", far));
  const auto named = [](const std::vector<const tinct::Raster*>& rasters) {
    try {
      tinct::shared_grid(rasters, 10);
    } catch (const tinct::Error& e) {
      return std::string(e.what());
    }
    return std::string("no error");
  };
  for (const auto& rasters : {std::vector<const tinct::Raster*>{&a, &odd}, std::vector{&odd, &a, &b},
                              std::vector{&a, &odd, &b}, std::vector{&a, &b, &odd}}) {
    const std::string message = named(rasters);
    CHECK_THAT(message, Contains((folder / "odd.tif").string() + ": this band file (x 510000 to 510080, y 5299940 to "
                                 "5300000) shares no area"));
    CHECK_THAT(message, Contains("a.tif") && !Contains("e+"));
  }
}

TEST_CASE("a scene reads aligned bands with NaN for nodata and masked pixels") {
  TempFolder folder;
  TestRasterSpec red;  // 8 x 6, value 1000 + 10 r + c
  red.nodata = 0;
  red.value = [](int, int c, int r) { return (c == 0 && r == 0) ? 0.0 : 1000.0 + 10 * r + c; };
  TestRasterSpec swir;  // 4 x 3 at 20 m: constant per pixel
  swir.width = 4;
  swir.height = 3;
  swir.pixel = 20;
  swir.value = [](int, int c, int r) { return 500.0 + 100 * r + c; };
  TestRasterSpec mask;  // class 9 (cloud) in the last column
  mask.type = GDT_Byte;
  mask.value = [](int, int c, int) { return c == 7 ? 9.0 : 4.0; };
  tinct::SceneSpec spec;
  spec.id = "s";
  spec.bands = {{"red", tinct::testing::write_test_raster(folder / "red.tif", red), 1},
                {"swir", tinct::testing::write_test_raster(folder / "swir.tif", swir), 1}};
  spec.date = "2026-06-14";
  spec.mask = tinct::SceneMask{tinct::testing::write_test_raster(folder / "mask.tif", mask), 1, {9}};
  const tinct::AlignSettings nearest{tinct::Resampling::nearest, tinct::Resampling::average};
  const tinct::Scene scene(spec, two_band_profile(), {"swir", "red"}, 10, nearest);
  REQUIRE(scene.grid().width == 8);
  REQUIRE(scene.grid().height == 6);
  std::vector<float> out(2 * 8 * 6);
  scene.read(0, 0, 8, 6, out.data());
  const float* swir_plane = out.data();
  const float* red_plane = out.data() + 48;
  CHECK(std::isnan(red_plane[0]));                 // nodata
  CHECK(red_plane[1] == 1001);
  CHECK(red_plane[5 * 8 + 6] == 1056);
  CHECK(std::isnan(red_plane[7]));                 // masked (class 9)
  CHECK(std::isnan(swir_plane[7]));                // masks apply to every band
  CHECK(swir_plane[0] == 500);                     // 20 m pixel (0,0) covers 10 m cols 0-1
  CHECK(swir_plane[3 * 8 + 2] == 601);             // row 3 -> 20 m row 1, col 2 -> 20 m col 1
  CHECK_THAT(scene.alignment_notes().front(), Contains("swir.tif: pixel size 20 -> 10 (near)"));
}

TEST_CASE("dates are parsed from ISO, TIFF and timestamp forms and counted in days") {
  CHECK(tinct::parse_date("2026-06-14") == std::string("2026-06-14"));
  CHECK(tinct::parse_date("2026:06:14 10:20:31") == std::string("2026-06-14"));
  CHECK(tinct::parse_date("2022-01-25T10:20:31.024Z") == std::string("2022-01-25"));
  CHECK_FALSE(tinct::parse_date("2026-02-30"));
  CHECK_FALSE(tinct::parse_date("14/06/2026"));
  // 2000-03-01 is day 11017 since 1970-01-01 (a leap-year check; common practice).
  CHECK(tinct::days_since_epoch("1970-01-01") == 0);
  CHECK(tinct::days_since_epoch("2000-03-01") == 11017);
  CHECK(tinct::days_since_epoch("2024-03-01") - tinct::days_since_epoch("2024-02-28") == 2);
}

TEST_CASE("chip plans cover the grid with the stride and random plans are seeded") {
  tinct::ChipPlanSettings settings;
  settings.size = 4;
  settings.stride = 2;
  const auto grid = tinct::plan_chips(10, 6, settings, 0);
  CHECK(grid.size() == 4 * 2);  // cols 0,2,4,6; rows 0,2
  CHECK(grid.back().col == 6);
  CHECK(grid.back().row == 2);
  settings.random = true;
  settings.random_count = 20;
  const auto a = tinct::plan_chips(100, 100, settings, 3);
  const auto b = tinct::plan_chips(100, 100, settings, 3);
  const auto c = tinct::plan_chips(100, 100, settings, 4);
  REQUIRE(a.size() == 20);
  bool same = true, differs = false;
  for (std::size_t i = 0; i < a.size(); ++i) {
    same = same && a[i].col == b[i].col && a[i].row == b[i].row;
    differs = differs || a[i].col != c[i].col || a[i].row != c[i].row;
    CHECK(a[i].col + 4 <= 100);
  }
  CHECK(same);
  CHECK(differs);
  CHECK(tinct::block_of(2500, -10, 1000) == "2_-1");
}
