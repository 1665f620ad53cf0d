#include "raster/point_transform.hpp"

#include <ogr_spatialref.h>

#include <cmath>

#include "raster/crs.hpp"
#include "raster/gdal_session.hpp"
#include "util/error.hpp"

namespace tinct {
namespace {

void read_crs(const std::string& definition, const std::string& role, OGRSpatialReference& crs) {
  crs.importFromWkt(crs_as_wkt(definition, role).c_str());
  crs.SetAxisMappingStrategy(OAMS_TRADITIONAL_GIS_ORDER);
}

}  // namespace

void PointTransform::Release::operator()(OGRCoordinateTransformation* transform) const {
  OGRCoordinateTransformation::DestroyCT(transform);
}

PointTransform::PointTransform(const std::string& from, const std::string& to, const std::string& from_role) {
  OGRSpatialReference source, target;
  read_crs(from, from_role, source);
  read_crs(to, "scene CRS", target);
  if (source.IsSame(&target)) return;
  transform_.reset(OGRCreateCoordinateTransformation(&source, &target));
  if (!transform_) {
    fail_usage("no transformation from the " + from_role + " to the scene CRS: " + last_gdal_message());
  }
}

PointTransform::PointTransform(PointTransform&&) noexcept = default;
PointTransform& PointTransform::operator=(PointTransform&&) noexcept = default;
PointTransform::~PointTransform() = default;

bool PointTransform::apply(double& x, double& y) const {
  if (!transform_) return std::isfinite(x) && std::isfinite(y);
  double tx = x, ty = y;
  if (!transform_->Transform(1, &tx, &ty) || !std::isfinite(tx) || !std::isfinite(ty)) return false;
  x = tx;
  y = ty;
  return true;
}

}  // namespace tinct
