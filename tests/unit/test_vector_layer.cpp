// VectorLayer and PolygonShape on real files read by OGR: field values as text,
// dates or other types, points, polygons as WKT, other geometries named, layers
// chosen by name with a suggestion, and point-in-polygon tests.
#include <catch2/catch.hpp>

#include "raster/polygon_shape.hpp"
#include "raster/vector_layer.hpp"
#include "temp_folder.hpp"
#include "util/error.hpp"

using Catch::Matchers::Contains;
using tinct::testing::TempFolder;

namespace {

// GeoJSON (RFC 7946): a point, a one-point multipoint, a polygon, a line and a
// feature without geometry; "visited" holds ISO dates, so OGR types it Date.
const char* kSites = R"({"type": "FeatureCollection", "name": "sites", "features": [
 {"type": "Feature", "properties": {"habitat": "reed", "visited": "2023-06-02", "traps": 3},
  "geometry": {"type": "Point", "coordinates": [500405.5, 5299595.25]}},
 {"type": "Feature", "properties": {"habitat": "dry", "visited": "2023-06-03", "traps": null},
  "geometry": {"type": "MultiPoint", "coordinates": [[500605, 5299395]]}},
 {"type": "Feature", "properties": {"habitat": "reed", "visited": "2023-06-04", "traps": 1},
  "geometry": {"type": "Polygon", "coordinates": [[[0, 0], [10, 0], [10, 10], [0, 10], [0, 0]]]}},
 {"type": "Feature", "properties": {"habitat": "ditch", "visited": "2023-06-05", "traps": 2},
  "geometry": {"type": "LineString", "coordinates": [[0, 0], [1, 1]]}},
 {"type": "Feature", "properties": {"habitat": "none", "visited": "2023-06-06", "traps": 0}, "geometry": null}
]})";

}  // namespace

TEST_CASE("vector layer: fields as text, dates or other types, geometries as points, WKT or named kinds") {
  TempFolder folder;
  const auto file = folder.write("sites.geojson", kSites);
  const tinct::VectorLayer layer = tinct::VectorLayer::open(file, "");
  CHECK(layer.name() == "sites");
  CHECK(layer.crs_wkt().find("WGS 84") != std::string::npos);  // RFC 7946: GeoJSON is in WGS 84
  CHECK(layer.field_names() == std::vector<std::string>{"habitat", "visited", "traps"});
  CHECK(layer.field_index("nope") == -1);

  std::vector<tinct::VectorFeature> features;
  const std::vector<int> fields = {layer.field_index("habitat"), layer.field_index("visited"),
                                   layer.field_index("traps"), -1};
  layer.for_each_feature(fields, [&](const tinct::VectorFeature& f) { features.push_back(f); });
  REQUIRE(features.size() == 5);
  const auto& first = features[0];
  CHECK(first.fields[0].present);
  CHECK(first.fields[0].kind == tinct::FieldKind::text);
  CHECK(first.fields[0].text == "reed");
  CHECK(first.fields[1].kind == tinct::FieldKind::date);
  CHECK((first.fields[1].year == 2023 && first.fields[1].month == 6 && first.fields[1].day == 2));
  CHECK(first.fields[2].kind == tinct::FieldKind::other);
  CHECK(first.fields[2].text == "3");
  CHECK(first.fields[2].type_name == "Integer");
  CHECK_FALSE(first.fields[3].present);
  CHECK(first.geometry.kind == tinct::GeometryKind::point);
  CHECK(first.geometry.x == 500405.5);
  CHECK(first.geometry.y == 5299595.25);

  CHECK_FALSE(features[1].fields[2].present);  // null
  CHECK(features[1].geometry.kind == tinct::GeometryKind::point);
  CHECK(features[1].geometry.x == 500605);
  CHECK(features[2].geometry.kind == tinct::GeometryKind::polygon);
  CHECK(features[2].geometry.wkt == "POLYGON ((0 0,10 0,10 10,0 10,0 0))");
  CHECK(features[3].geometry.kind == tinct::GeometryKind::other);
  CHECK(features[3].geometry.type_name == "Line String");
  CHECK(features[4].geometry.kind == tinct::GeometryKind::none);
}

TEST_CASE("vector layer: a missing layer is named with a suggestion, a non-vector file refused") {
  TempFolder folder;
  const auto file = folder.write("sites.geojson", kSites);
  CHECK_THROWS_WITH(tinct::VectorLayer::open(file, "site"),
                    Contains("no layer \"site\" (labels.layer); its layers are sites") &&
                        Contains("did you mean \"sites\"?"));
  const auto text = folder.write("notes.txt", "not a vector file\n");
  CHECK_THROWS_WITH(tinct::VectorLayer::open(text, ""), Contains("notes.txt: not a vector file OGR can read"));
}

TEST_CASE("polygon shape: envelope and strict point-in-polygon, unreadable WKT named") {
  const tinct::PolygonShape square("POLYGON ((0 0,10 0,10 10,0 10,0 0))", "test");
  const tinct::Envelope box = square.envelope();
  CHECK((box.min_x == 0 && box.min_y == 0 && box.max_x == 10 && box.max_y == 10));
  if (!tinct::PolygonShape::available()) {
    WARN("skipped the point tests: this GDAL has no GEOS");
    return;
  }
  CHECK(square.contains(5, 5));
  CHECK_FALSE(square.contains(10, 5));  // on the boundary: not within
  CHECK_FALSE(square.contains(11, 5));
  CHECK_THROWS_WITH(tinct::PolygonShape("POLYGON ((0 0", "sites.gpkg feature 3"),
                    Contains("sites.gpkg feature 3: its polygon cannot be read back"));
}
