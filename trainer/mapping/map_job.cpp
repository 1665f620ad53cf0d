#include "mapping/map_job.hpp"

#include <yaml-cpp/yaml.h>

#if defined(__GLIBC__)
#include <malloc.h>
#endif

#include "mapping/map_caution.hpp"
#include "mapping/point_predictions.hpp"
#include "mapping/run_evidence.hpp"
#include "mapping/scene_mapper.hpp"
#include "mapping/map_model.hpp"
#include "raster/gdal_session.hpp"
#include "raster/target_grid.hpp"
#include "raster/vrt_mosaic.hpp"
#include "runs/metrics_log.hpp"
#include "util/atomic_file.hpp"
#include "util/error.hpp"
#include "util/log.hpp"
#include "util/version_info.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

std::string run_config_hash(const fs::path& run) {
  try {
    const YAML::Node status = YAML::LoadFile((run / "run.yaml").string());
    if (status["config_hash"]) return status["config_hash"].as<std::string>();
  } catch (const YAML::Exception&) {
  }
  return "unknown";
}

std::string calibration_text(const RunEvidence& evidence) {
  return evidence.calibrated ? "temperature " + metric_text(evidence.temperature) + " fitted on the run's validation chips"
                             : "none (uncalibrated softmax)";
}

std::map<std::string, std::string> provenance(const MapSettings& s, const std::vector<RunEvidence>& members) {
  const RunEvidence& evidence = members.front();
  std::map<std::string, std::string> m;
  m["TINCT_CAUTION"] = kMapCaution;
  m["TINCT_RUN"] = s.run.lexically_normal().filename().string();
  m["TINCT_RUN_CONFIG_HASH"] = run_config_hash(s.run);
  if (s.runs.size() > 1) {
    m["TINCT_ENSEMBLE"] = s.source + "; class probabilities: the mean of the members' calibrated probabilities; "
                          "uncertainty band 2: the members' disagreement (mutual information / ln K)";
    for (std::size_t i = 0; i < s.runs.size(); ++i) {
      const std::string key = "TINCT_MEMBER_" + std::to_string(i + 1);
      m[key] = fs::absolute(s.runs[i]).lexically_normal().string() + "; config hash " + run_config_hash(s.runs[i]) +
               "; calibration " + calibration_text(members[i]);
    }
  }
  m["TINCT_MAP_CONFIG_HASH"] = s.config_hash;
  m["TINCT_VERSION"] = tinct_version();
  m["TINCT_MODE"] = to_string(s.mode);
  m["TINCT_STRIDE_PX"] = std::to_string(s.stride);
  m["TINCT_WINDOW_PX"] = std::to_string(s.inputs.chip_size);
  m["TINCT_MIN_VALID"] = metric_text(s.min_valid);
  m["TINCT_CALIBRATION"] = s.runs.size() > 1 ? "each member by its own temperature (TINCT_MEMBER_*)"
                                              : calibration_text(evidence);
  if (evidence.applicability) {
    m["TINCT_AOA"] = "dissimilarity index over the unweighted standardised features the head reads (head.pool " +
                     s.inputs.head_pool + "); threshold " +
                     metric_text(evidence.applicability->threshold) +
                     (s.runs.size() > 1 ? "; of the first member's encoder and training chips" : "");
  }
  return m;
}

void build_mosaics(const fs::path& folder, const std::vector<std::string>& scenes, bool aoa,
                   const std::vector<std::string>& crs) {
  for (std::size_t i = 1; i < crs.size(); ++i) {
    if (!same_crs(crs[i], crs[0])) {
      log::warning("map: the scenes lie in different CRS; no mosaic is built (each scene's files stand alone)");
      return;
    }
  }
  std::vector<std::string> products{"probabilities", "classes", "uncertainty"};
  if (aoa) products.push_back("aoa");
  for (const auto& product : products) {
    std::vector<fs::path> sources;
    for (const auto& id : scenes) sources.push_back(folder / id / (product + ".tif"));
    build_vrt_mosaic(folder / ("mosaic-" + product + ".vrt"), sources);
  }
}

// The model's activations for one tile or batch are allocated and freed again for every
// tile: glibc would hand freed blocks above its thresholds back to the kernel and fault the
// same pages in anew for the next tile (a fifth of dense's model time in CPU seconds on a
// 1024 px scene). Keeping up to 256 MB of freed memory for reuse costs no peak memory:
// the blocks kept are the ones the previous tile used.
void keep_freed_memory_for_reuse() {
#if defined(__GLIBC__)
  mallopt(M_MMAP_THRESHOLD, 64 * 1024 * 1024);
  mallopt(M_TRIM_THRESHOLD, 256 * 1024 * 1024);
#endif
}

}  // namespace

void run_map(const MapSettings& s, const MapJobOptions& options) {
  keep_freed_memory_for_reuse();
  decode_tiles_on_one_thread();  // strips overlap: each tile decoded once
  MapModel model(s.runs);
  log::info("map: " + s.source + ", " + std::to_string(s.inputs.chip_size) + " px windows at stride " +
            std::to_string(s.stride) + " px, " + to_string(s.mode) + " mode, classes " +
            std::to_string(model.classes().size()));
  // Each member calibrated on its own validation chips; the area of applicability is the
  // first member's (its encoder's features are the ones the map keeps).
  std::vector<RunEvidence> members;
  std::vector<double> temperatures;
  for (std::size_t i = 0; i < s.runs.size(); ++i) {
    if (s.runs.size() > 1) log::info("map: member " + std::to_string(i + 1) + ": " + s.runs[i].string());
    members.push_back(s.aoa ? gather_run_evidence(s.runs[i], model.member(i), i == 0, s.batch, options.threads)
                            : RunEvidence{});
    temperatures.push_back(members.back().temperature);
  }
  model.set_temperatures(temperatures);
  if (!s.aoa) log::warning("map: aoa: false: no area of applicability and uncalibrated probabilities");
  const RunEvidence& evidence = members.front();
  MapContext context{s, model, evidence, provenance(s, members), options.threads};

  PartialFolder out(s.output, options.replace);
  write_applicability_files(out.path(), evidence);
  if (!options.points.empty()) {
    predict_points(options.points, context, out.path());
    out.commit();
    return;
  }
  std::vector<std::string> ids, crs;
  for (const SceneSpec& scene : s.scenes) {
    const fs::path folder = out.path() / scene.id;
    fs::create_directories(folder);
    const SceneMapSummary summary = map_scene(scene, context, folder);
    log::info("map: " + scene.id + ": " + std::to_string(summary.cells) + " cells, " +
              std::to_string(summary.valid) + " with data, " + std::to_string(summary.outside) +
              " of them outside the area of applicability; " + metric_text(summary.megapixels / summary.seconds) +
              " Mpx/s");
    ids.push_back(scene.id);
    crs.push_back(summary.crs_wkt);
  }
  if (ids.size() > 1) build_mosaics(out.path(), ids, evidence.applicability.has_value(), crs);
  out.commit();
  log::info("map: wrote " + s.output.string() + ". " + kMapCaution);
}

}  // namespace tinct
