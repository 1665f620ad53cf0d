// `tinct map`: a finetune run applied to whole scenes. Output folder: one sub-folder per
// scene id (probabilities.tif, classes.tif, uncertainty.tif, aoa.tif, quicklook.png),
// training_features.csv and aoa.json (the area of applicability's inputs), and with
// several scenes a VRT mosaic per product. Built under OUTPUT.partial and renamed.
#pragma once

#include <filesystem>

#include "mapping/map_settings.hpp"

namespace tinct {

struct MapJobOptions {
  bool replace = false;
  int threads = 0;
  std::filesystem::path points;  // predict at these locations instead of mapping scenes
};

void run_map(const MapSettings& settings, const MapJobOptions& options);

}  // namespace tinct
