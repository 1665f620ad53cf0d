// Inputs the fuzz targets found (scripts/fuzz.sh), kept in tests/fuzz/regressions/TARGET/ and
// replayed through the same reader: each must end in a tinct::Error naming the file, never in
// another exception or a crash.
#include <catch2/catch.hpp>

#include <filesystem>
#include <fstream>
#include <iterator>
#include <string>

#include "labels/label_reader.hpp"
#include "runs/safetensors_layout.hpp"
#include "util/error.hpp"

namespace fs = std::filesystem;

namespace {

fs::path regression(const std::string& target, const std::string& name) {
  const fs::path file = fs::path(TINCT_FUZZ_REGRESSIONS_DIR) / target / name;
  REQUIRE(fs::is_regular_file(file));
  return file;
}

std::string file_bytes(const fs::path& file) {
  std::ifstream in(file, std::ios::binary);
  return std::string(std::istreambuf_iterator<char>(in), {});
}

}  // namespace

TEST_CASE("fuzz find: a safetensors header number beyond a double is a clean refusal") {
  const fs::path file = regression("safetensors", "number-overflow");
  CHECK_THROWS_WITH(tinct::read_safetensors_layout(file_bytes(file), file),
                    Catch::Contains(file.string()) && Catch::Contains("number overflow"));
}

TEST_CASE("fuzz find: GeoJSON labels whose crs names no known CRS are a clean refusal") {
  // Found as timeouts under a heavily loaded machine: PROJ searches its database for the
  // garbled name (about a second of CPU); the layer then has no CRS.
  for (const char* name : {"crs-urn-name-search-1.geojson", "crs-urn-name-search-2.geojson"}) {
    tinct::LabelSourceSettings settings;
    settings.source = regression("label_geojson", name);
    settings.class_column = "class";
    settings.date_column = "date";
    settings.group_column = "group";
    settings.id_column = "id";
    CHECK_THROWS_WITH(tinct::read_label_source(settings), Catch::Contains(settings.source.string()));
  }
}
