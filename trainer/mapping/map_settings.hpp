// The settings of `tinct map`, from a YAML config (config: map) or from the short form
// `tinct map RUN RASTER --out DIR`. Required: output, scenes (as in label configs) and one
// of run: (a finetune run), runs: (an ensemble of runs) or study: with arm: (optional
// budget:, fold:; the rule in study_arm_runs.hpp).
// Defaults: stride chip size / 4, mode exact (dense, the faster approximation, needs a
// stride that is a multiple of the encoder's deepest stride), probabilities uint8,
// min_valid 0.5, aoa true, sensor none (scenes are read with a profile made from the run's
// bands, and stored values become reflectance with the scale and offset of the run's label
// store), grid resolution the run's store pixel size, aoa_step 8 (dense mode only).
#pragma once

#include <filesystem>
#include <optional>
#include <string>
#include <vector>

#include "raster/resampling.hpp"
#include "raster/scene_spec.hpp"
#include "raster/sensor_profile.hpp"
#include "mapping/study_arm_runs.hpp"
#include "util/config_node.hpp"

namespace tinct {

enum class MapMode { exact, dense };
enum class ProbabilityType { uint8, float32 };

// What the run says about its inputs: taken from its model.pt and its label stores.
struct RunInputs {
  std::vector<std::string> bands;
  int chip_size = 0;
  int feature_stride = 16;             // the encoder's deepest stride
  std::string head_pool = "global";    // how the run's head reads a chip (models/head_spec.hpp)
  std::vector<double> scale, offset;   // per band: reflectance = (stored + offset) * scale
  bool uint16_storage = true;          // the store rounded values to integers
  double pixel_size = 0;               // of the training store
  std::vector<std::filesystem::path> stores;  // the run's label stores
};

struct MapSettings {
  std::filesystem::path run;                // the first of runs
  std::vector<std::filesystem::path> runs;  // several: an ensemble
  std::string source;                       // where the runs came from, in words
  std::filesystem::path output;
  int stride = 0;
  MapMode mode = MapMode::exact;
  ProbabilityType probabilities = ProbabilityType::uint8;
  double min_valid = 0.5;
  bool aoa = true;
  // Windows between the area of applicability's cells, across and down. Its features must be
  // those of exact windows (the training chips' are: dense features carry context from beyond
  // the window and lie elsewhere in feature space), so dense maps compute it on exact windows
  // every aoa_step windows, aoa.tif on a grid aoa_step times coarser. Exact maps use 1.
  // Those windows cost a whole exact pass over the scene at step 4 (64 px windows every
  // 64 px), as much as the dense pass itself; step 8 costs a quarter of that (the bench).
  int aoa_step = 8;
  int applicability_step() const { return mode == MapMode::dense ? aoa_step : 1; }
  int batch = 32;
  SensorProfile profile;      // reads the scenes
  bool sensor_given = false;  // profile from the config: its scale and offset apply
  std::vector<SceneSpec> scenes;
  double resolution = 0;
  AlignSettings align;
  RunInputs inputs;
  std::string config_hash;

  // "RUN", "ensemble of N runs" or "arm A, budget B, fold F: N seeds", for titles.
  std::string model_name() const;
};

// Reads the run's model description and store manifests (the run's config.resolved.yaml).
RunInputs read_run_inputs(const std::filesystem::path& run);

// Why mode dense cannot map a run with these inputs ("" when it can): dense averages the
// encoder's feature map per window, which only a head that pools the whole window reads.
std::string dense_refusal(const RunInputs& inputs);

// `root` is the config's top level; calls finish() on every section it reads.
MapSettings read_map_config(const ConfigNode& root);

// The short form: one raster whose bands are the run's inputs in order. With an arm,
// `run` is a study folder.
MapSettings map_settings_for_raster(const std::filesystem::path& run, const std::filesystem::path& raster,
                                    const std::filesystem::path& output, const std::optional<StudyArmChoice>& arm = {});

std::string to_string(MapMode mode);

}  // namespace tinct
