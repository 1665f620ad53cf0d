#include "inference/chip_places.hpp"

#include "raster/crs.hpp"

namespace tinct {
namespace {

std::string scene_crs(const StoreManifest& manifest, const std::string& scene) {
  for (const StoreScene& s : manifest.scenes) {
    if (s.id == scene && !s.crs.empty()) return s.crs;
  }
  return manifest.crs;
}

}  // namespace

const ChipPlaces::CrsView& ChipPlaces::view(const std::string& wkt) {
  const auto found = views_.find(wkt);
  if (found != views_.end()) return found->second;
  CrsView v;
  v.name = crs_short_name(wkt);
  if (crs_has_lonlat(wkt)) v.to_lonlat = std::make_unique<PointTransform>(wkt, "EPSG:4326", "store CRS");
  return views_.emplace(wkt, std::move(v)).first->second;
}

ChipPlace ChipPlaces::of(const ChipRef& ref) {
  const StoreReader& store = chips_.store(ref.store);
  const ChipRecord record = store.record(ref.chip);
  const CrsView& crs = view(scene_crs(store.manifest(), record.scene));
  ChipPlace place{record.x, record.y, crs.name, false, record.x, record.y};
  if (crs.to_lonlat) place.has_lonlat = crs.to_lonlat->apply(place.lon, place.lat);
  return place;
}

}  // namespace tinct
