// One scene's map: strips of window rows read from the scene, the model applied (exact or
// dense), cells written to the products and the quicklook. Memory: one strip of the scene
// and the model's activations for one batch or tile, whatever the scene size.
#pragma once

#include <filesystem>
#include <map>
#include <string>

#include "mapping/map_settings.hpp"
#include "mapping/run_evidence.hpp"
#include "mapping/scene_strip.hpp"
#include "mapping/map_model.hpp"
#include "raster/scene_spec.hpp"

namespace tinct {

struct MapContext {
  const MapSettings& settings;
  MapModel& model;
  const RunEvidence& evidence;  // the first member's: its area of applicability
  std::map<std::string, std::string> metadata;  // caution and provenance for every file
  int threads = 0;
};

struct SceneMapSummary {
  std::int64_t cells = 0, valid = 0, outside = 0;
  double seconds = 0;
  double megapixels = 0;  // of the scene grid mapped
  std::string crs_wkt;
};

// The model's encoding of stored values for this run and these settings.
InputEncoding input_encoding(const MapSettings& settings, const BandNormalisation& normalisation);

// Writes the scene's files into `folder` (which exists).
SceneMapSummary map_scene(const SceneSpec& scene, const MapContext& context, const std::filesystem::path& folder);

}  // namespace tinct
