// The whole of `tinct label`: reads the labels (vector, CSV or label raster),
// keeps the listed classes, samples polygons, matches every label to a scene,
// writes one chip per matched label into a label store (no colour) with the drop
// report inside it, and logs kept and dropped counts per class. Fails, leaving
// no store (but the drop report beside it), when no label gives a chip.
#pragma once

#include <cstdint>
#include <filesystem>
#include <string>

#include "labels/label_config.hpp"

namespace tinct {

struct LabelJobOptions {
  std::filesystem::path output;
  bool replace = false;
  std::string config_hash;
};

struct LabelSummary {
  std::int64_t labels = 0;  // after polygon sampling, including those dropped
  std::int64_t kept = 0;
  std::int64_t dropped = 0;
};

LabelSummary run_label_job(const LabelConfig& config, const LabelJobOptions& options);

}  // namespace tinct
