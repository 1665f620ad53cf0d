// A polygon or multipolygon read from WKT, for point-in-polygon tests (GEOS
// through OGR) while sampling polygon labels; owns its OGR geometry.
#pragma once

#include <memory>
#include <string>

class OGRGeometry;

namespace tinct {

struct Envelope {
  double min_x = 0, min_y = 0, max_x = 0, max_y = 0;
};

class PolygonShape {
 public:
  // Fails (runtime) with `where` when the WKT cannot be read.
  PolygonShape(const std::string& wkt, const std::string& where);
  PolygonShape(PolygonShape&&) noexcept;
  PolygonShape& operator=(PolygonShape&&) noexcept;
  ~PolygonShape();

  Envelope envelope() const;
  // Whether the point lies strictly inside (OGR's Within).
  bool contains(double x, double y) const;

  // Whether this GDAL has GEOS, which contains() needs.
  static bool available();

 private:
  struct Release {
    void operator()(OGRGeometry* geometry) const;
  };
  std::unique_ptr<OGRGeometry, Release> geometry_;
};

}  // namespace tinct
