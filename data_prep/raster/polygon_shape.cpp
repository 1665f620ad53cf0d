#include "raster/polygon_shape.hpp"

#include <ogr_geometry.h>

#include "raster/gdal_session.hpp"
#include "util/error.hpp"

namespace tinct {

void PolygonShape::Release::operator()(OGRGeometry* geometry) const {
  OGRGeometryFactory::destroyGeometry(geometry);
}

PolygonShape::PolygonShape(const std::string& wkt, const std::string& where) {
  ensure_gdal();
  OGRGeometry* geometry = nullptr;
  const char* text = wkt.c_str();
  if (OGRGeometryFactory::createFromWkt(&text, nullptr, &geometry) != OGRERR_NONE || !geometry) {
    fail_runtime(where + ": its polygon cannot be read back (" + last_gdal_message() + ")");
  }
  geometry_.reset(geometry);
}

PolygonShape::PolygonShape(PolygonShape&&) noexcept = default;
PolygonShape& PolygonShape::operator=(PolygonShape&&) noexcept = default;
PolygonShape::~PolygonShape() = default;

Envelope PolygonShape::envelope() const {
  OGREnvelope box;
  geometry_->getEnvelope(&box);
  return {box.MinX, box.MinY, box.MaxX, box.MaxY};
}

bool PolygonShape::contains(double x, double y) const {
  const OGRPoint point(x, y);
  return point.Within(geometry_.get());
}

bool PolygonShape::available() {
  ensure_gdal();
  return OGRGeometryFactory::haveGEOS();
}

}  // namespace tinct
