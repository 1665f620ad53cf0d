// Points from a label source's CRS into a scene's CRS, through OGR and PROJ, in
// the traditional GIS axis order on both sides (x = longitude or easting, y =
// latitude or northing), whatever order the EPSG definition declares.
#pragma once

#include <memory>
#include <string>

class OGRCoordinateTransformation;

namespace tinct {

class PointTransform {
 public:
  // `from` and `to`: anything OGR reads as a CRS (WKT, "EPSG:4326", a PROJ string).
  // Fails (usage) naming `from_role` when a definition cannot be read.
  PointTransform(const std::string& from, const std::string& to, const std::string& from_role = "label CRS");
  PointTransform(PointTransform&&) noexcept;
  PointTransform& operator=(PointTransform&&) noexcept;
  ~PointTransform();

  // False when PROJ cannot transform the point (outside the target's domain).
  bool apply(double& x, double& y) const;
  bool identity() const { return transform_ == nullptr; }

 private:
  struct Release {
    void operator()(OGRCoordinateTransformation* transform) const;
  };
  std::unique_ptr<OGRCoordinateTransformation, Release> transform_;  // null: same CRS
};

}  // namespace tinct
