#include <catch2/catch.hpp>

#include <cstdlib>

#include "raster/sensor_profile.hpp"
#include "temp_folder.hpp"
#include "util/error.hpp"

using Catch::Matchers::Contains;
using tinct::testing::TempFolder;

namespace {

const std::filesystem::path kSensors = std::filesystem::path(TINCT_SOURCE_CONFIG_DIR) / "sensors";

struct PublishedBand {
  const char* name;
  double centre_nm, width_nm, resolution;
};

}  // namespace

TEST_CASE("the Sentinel-2 L2A profile matches the handbook band table") {
  // ESA Sentinel-2 User Handbook (2015) centre / width / resolution, from memory, as
  // listed in REFERENCES.md section 5. L2A has no B10.
  const PublishedBand kHandbook[] = {
      {"B01", 443, 20, 60},  {"B02", 490, 65, 10},   {"B03", 560, 35, 10}, {"B04", 665, 30, 10},
      {"B05", 705, 15, 20},  {"B06", 740, 15, 20},   {"B07", 783, 20, 20}, {"B08", 842, 115, 10},
      {"B8A", 865, 20, 20},  {"B09", 945, 20, 60},   {"B11", 1610, 90, 20}, {"B12", 2190, 180, 20}};
  const auto profile = tinct::load_sensor_profile_file(kSensors / "sentinel2-l2a.yaml");
  REQUIRE(profile.bands.size() == 12);
  for (std::size_t i = 0; i < 12; ++i) {
    CHECK(profile.bands[i].name == kHandbook[i].name);
    CHECK(profile.bands[i].centre_nm == kHandbook[i].centre_nm);
    CHECK(profile.bands[i].width_nm == kHandbook[i].width_nm);
    CHECK(profile.bands[i].resolution == kHandbook[i].resolution);
  }
  CHECK(profile.band("B10") == nullptr);
  CHECK(profile.reference_resolution == 10);
  CHECK(profile.nodata == 0.0);
}

TEST_CASE("Sentinel-2 reflectance follows the quantification rule before and after baseline 04.00") {
  // Worked values (REFERENCES.md section 5, arithmetic on the ESA rule, from memory):
  // baseline >= 04.00: DN 1000 -> 0.0, 2500 -> 0.15, 11000 -> 1.0, 500 -> -0.05; before: 2500 -> 0.25.
  auto profile = tinct::load_sensor_profile_file(kSensors / "sentinel2-l2a.yaml");
  CHECK(profile.reflectance(2500) == Approx(0.25));
  profile.baseline_04 = true;
  CHECK(profile.reflectance(1000) == Approx(0.0).margin(1e-12));
  CHECK(profile.reflectance(2500) == Approx(0.15));
  CHECK(profile.reflectance(11000) == Approx(1.0));
  CHECK(profile.reflectance(500) == Approx(-0.05));
}

TEST_CASE("the Landsat 7 ETM+ profile spans the handbook band ranges") {
  // USGS Landsat 7 Science Data Users Handbook ranges in um (from memory, REFERENCES.md section 6).
  const double kRanges[][2] = {{0.45, 0.52}, {0.52, 0.60}, {0.63, 0.69},
                               {0.77, 0.90}, {1.55, 1.75}, {2.09, 2.35}};
  const auto profile = tinct::load_sensor_profile_file(kSensors / "landsat7-etm.yaml");
  REQUIRE(profile.bands.size() == 6);
  for (std::size_t i = 0; i < 6; ++i) {
    const auto& band = profile.bands[i];
    CHECK(band.centre_nm - band.width_nm / 2 == Approx(kRanges[i][0] * 1000));
    CHECK(band.centre_nm + band.width_nm / 2 == Approx(kRanges[i][1] * 1000));
    CHECK(band.resolution == 30);
  }
  CHECK_FALSE(profile.nodata.has_value());
}

TEST_CASE("the Landsat 8/9 OLI Collection 2 Level-2 profile follows the product guide") {
  // USGS Landsat 8-9 Collection 2 Level-2 Science Product Guide, from memory, as listed in
  // REFERENCES.md section 9: centres in nm, 30 m, reflectance = DN x 0.0000275 - 0.2.
  const PublishedBand kGuide[] = {{"B1", 443, 20, 30},  {"B2", 482, 65, 30},  {"B3", 561, 75, 30},
                                  {"B4", 655, 50, 30},  {"B5", 865, 40, 30},  {"B6", 1609, 100, 30},
                                  {"B7", 2201, 200, 30}};
  const auto profile = tinct::load_sensor_profile_file(kSensors / "landsat8-9-oli-l2.yaml");
  REQUIRE(profile.bands.size() == 7);
  for (std::size_t i = 0; i < 7; ++i) {
    CHECK(profile.bands[i].name == kGuide[i].name);
    CHECK(profile.bands[i].centre_nm == kGuide[i].centre_nm);
    CHECK(profile.bands[i].resolution == kGuide[i].resolution);
  }
  // Worked (arithmetic on the guide's rule): DN 10000 -> 0.075, 7273 -> 0.0000075, 43636 -> 0.99999.
  CHECK(profile.reflectance(10000) == Approx(0.075).margin(1e-12));
  CHECK(profile.reflectance(7273) == Approx(0.0000075).margin(1e-12));
  CHECK(profile.reflectance(43636) == Approx(0.99999).margin(1e-12));
  CHECK(profile.reflectance(0) == Approx(-0.2).margin(1e-12));
  CHECK(profile.nodata == 0.0);
  REQUIRE(profile.left_out_band("B10") != nullptr);
  CHECK_THAT(profile.left_out_band("B10")->why, Contains("surface temperature"));
  CHECK(profile.band("B10") == nullptr);
}

TEST_CASE("profiles say which of the sensor's bands they leave out") {
  const auto etm = tinct::load_sensor_profile_file(kSensors / "landsat7-etm.yaml");
  REQUIRE(etm.left_out_band("B6") != nullptr);
  CHECK_THAT(etm.left_out_band("B6")->why, Contains("thermal"));
  CHECK(etm.left_out_band("B8") != nullptr);
  CHECK(etm.left_out_band("B5") == nullptr);
  const auto s2 = tinct::load_sensor_profile_file(kSensors / "sentinel2-l2a.yaml");
  REQUIRE(s2.left_out_band("B10") != nullptr);
  CHECK_THAT(s2.left_out_band("B10")->why, Contains("cirrus"));
}

TEST_CASE("the generic template is a valid profile") {
  const auto profile = tinct::load_sensor_profile_file(kSensors / "generic.yaml");
  CHECK(profile.band_names() == std::vector<std::string>{"blue", "green", "red", "nir"});
}

TEST_CASE("a config names a profile and overrides its fields") {
  TempFolder folder;
  ::setenv("TINCT_CONFIG_DIR", TINCT_SOURCE_CONFIG_DIR, 1);
  const auto file = folder.write(
      "pair.yaml", "sensor:\n  profile: sentinel2-l2a\n  baseline_04: true\n  nodata: 1\n");
  const auto root = tinct::ConfigNode::load(file);
  const auto profile = tinct::read_sensor_reference(root, "sensor");
  CHECK(profile.name == "sentinel2-l2a");
  CHECK(profile.baseline_04);
  CHECK(profile.effective_offset() == -1000);
  CHECK(profile.nodata == 1.0);
  CHECK(profile.bands.size() == 12);
}

TEST_CASE("an unknown profile field or name is a clear error") {
  TempFolder folder;
  ::setenv("TINCT_CONFIG_DIR", TINCT_SOURCE_CONFIG_DIR, 1);
  const auto typo = folder.write("a.yaml", "sensor:\n  profile: sentinel2-l2a\n  nodatta: 1\n");
  try {
    tinct::read_sensor_reference(tinct::ConfigNode::load(typo), "sensor");
    FAIL("expected an error");
  } catch (const tinct::Error& e) {
    CHECK_THAT(e.what(), Contains("sensor.nodatta: unknown key; did you mean \"nodata\"?"));
  }
  const auto missing = folder.write("b.yaml", "sensor: sentinel9\n");
  try {
    tinct::read_sensor_reference(tinct::ConfigNode::load(missing), "sensor");
    FAIL("expected an error");
  } catch (const tinct::Error& e) {
    CHECK_THAT(e.what(), Contains("no sensor profile named \"sentinel9\""));
  }
}
