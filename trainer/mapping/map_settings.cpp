#include "mapping/map_settings.hpp"

#include <yaml-cpp/yaml.h>

#include "batches/chip_collection.hpp"
#include "chips/store_manifest.hpp"
#include "models/model_spec.hpp"
#include "raster/band_settings.hpp"
#include "raster/processing_baseline.hpp"
#include "raster/raster.hpp"
#include "runs/model_archive.hpp"
#include "util/error.hpp"
#include "util/sha256.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

std::vector<fs::path> run_stores(const fs::path& run) {
  const fs::path config = run / "config.resolved.yaml";
  if (!fs::exists(config)) {
    fail_usage(run.string() + ": no config.resolved.yaml; give the folder of a finetune run (it holds model.pt)");
  }
  std::vector<fs::path> stores;
  const YAML::Node root = YAML::LoadFile(config.string());
  if (root["stores"]) {
    for (const auto& item : root["stores"]) {
      const fs::path store = item.as<std::string>();
      stores.push_back(store.is_relative() ? (run / store).lexically_normal() : store);  // as ConfigNode reads it
    }
  }
  if (stores.empty()) fail_runtime(config.string() + ": lists no stores; was the run made by tinct finetune?");
  return stores;
}

void take_store_encoding(const fs::path& store, RunInputs& inputs) {
  const fs::path manifest_file = store / "manifest.yaml";
  if (!fs::exists(manifest_file)) {
    fail_usage(store.string() + ": the run's label store is missing; map needs its manifest (band scale and offset) "
               "and, for the area of applicability, its chips: put it back where the run's config.resolved.yaml "
               "says");
  }
  const StoreManifest manifest = read_manifest(manifest_file);
  for (const auto& band : inputs.bands) {
    const auto found = std::find_if(manifest.bands.begin(), manifest.bands.end(),
                                    [&](const StoreBand& b) { return b.name == band; });
    if (found == manifest.bands.end()) fail_runtime(manifest_file.string() + ": has no band " + band);
    inputs.scale.push_back(found->scale);
    inputs.offset.push_back(found->offset);
    inputs.uint16_storage = found->storage == StorageType::uint16;
  }
  inputs.pixel_size = manifest.pixel_size;
}

// A profile for scenes read without a sensor: the run's bands, its store's scale and offset.
SensorProfile profile_from_run(const RunInputs& inputs) {
  SensorProfile profile;
  profile.name = "the run's bands";
  profile.reference_resolution = inputs.pixel_size;
  profile.scale = inputs.scale.empty() ? 1.0 : inputs.scale.front();
  profile.offset = inputs.offset.empty() ? 0.0 : inputs.offset.front();
  for (const auto& band : inputs.bands) profile.bands.push_back({band, 0, 0, inputs.pixel_size});
  return profile;
}

void read_options(const ConfigNode& root, MapSettings& s) {
  const int chip = s.inputs.chip_size;
  s.stride = static_cast<int>(root.integer("stride", std::max(1, chip / 4), 1, chip));
  // Exact by default: a map must agree with the model as it scores chips, and dense maps
  // disagree with exact ones on 6 to 9 % of cells across the whole map (README, Time and memory).
  s.mode = root.choice("mode", {"exact", "dense"}, "exact") == "dense" ? MapMode::dense : MapMode::exact;
  if (s.mode == MapMode::dense && s.stride % s.inputs.feature_stride != 0) {
    root.fail("mode", "dense needs a stride that is a multiple of the encoder's feature stride (" +
                          std::to_string(s.inputs.feature_stride) + " px); use stride: " +
                          std::to_string(s.inputs.feature_stride * std::max(1, s.stride / s.inputs.feature_stride)) +
                          " or mode: exact");
  }
  s.probabilities =
      root.choice("probabilities", {"uint8", "float32"}, "uint8") == "uint8" ? ProbabilityType::uint8
                                                                             : ProbabilityType::float32;
  s.min_valid = root.number("min_valid", 0.5, 0.0, 1.0);
  s.aoa = root.flag("aoa", true);
  s.aoa_step = static_cast<int>(root.integer("aoa_step", 8, 1, 32));
  if (32 % s.aoa_step != 0) root.fail("aoa_step", "must divide 32: 1, 2, 4, 8, 16 or 32");
  if (s.mode == MapMode::dense) {
    const std::string refusal = dense_refusal(s.inputs);
    if (!refusal.empty()) root.fail("mode", refusal);
  }
  s.batch = static_cast<int>(root.integer("batch", 32, 1, 4096));
}

void check_scene_bands(const ConfigNode& item, const SceneSpec& scene, const RunInputs& inputs) {
  std::string missing;
  for (const auto& band : inputs.bands) {
    if (!scene.band(band)) missing += (missing.empty() ? "" : ", ") + band;
  }
  if (!missing.empty()) {
    item.fail("", "scene " + scene.id + " lacks the run's input bands " + missing +
                      "; the model was trained on these bands and needs every one");
  }
}

// Sets the runs and the run inputs (from the first: MapModel checks the others agree).
void take_runs(std::vector<fs::path> runs, const std::string& source, MapSettings& s) {
  for (const fs::path& run : runs) {
    if (!fs::exists(run / "model.pt")) fail_usage("map: " + run.string() + " holds no model.pt; give a finished finetune run");
  }
  s.runs = std::move(runs);
  s.run = s.runs.front();
  s.source = source;
  s.inputs = read_run_inputs(s.run);
}

std::string arm_source(const StudyArmChoice& c, const StudyArmRuns& r) {
  return "study " + c.study.string() + ", arm " + c.arm + ", budget " + r.budget + ", fold " + std::to_string(r.fold) +
         ": " + std::to_string(r.runs.size()) + " seed" + (r.runs.size() == 1 ? "" : "s");
}

void read_model_source(const ConfigNode& root, MapSettings& s) {
  const int given = (root.has("run") ? 1 : 0) + (root.has("runs") ? 1 : 0) + (root.has("study") ? 1 : 0);
  if (given != 1) {
    root.fail(given == 0 ? "run" : "", "give exactly one of run: (a finetune run), runs: (finetune runs to "
                                           "average as an ensemble) or study: with arm: (a study arm's seeds)");
  }
  if (root.has("run")) {
    const fs::path run = root.path("run", true);
    take_runs({run}, "run " + run.string(), s);
  } else if (root.has("runs")) {
    std::vector<fs::path> runs;
    for (const std::string& text : root.texts("runs")) {
      const fs::path run = fs::path(text).is_relative() ? (root.folder() / text).lexically_normal() : fs::path(text);
      if (std::find(runs.begin(), runs.end(), run) != runs.end()) root.fail("runs", run.string() + " is listed twice");
      runs.push_back(run);
    }
    if (runs.empty()) root.fail("runs", "list at least one finetune run");
    take_runs(runs, "ensemble of " + std::to_string(runs.size()) + " runs", s);
  } else {
    StudyArmChoice choice;
    choice.study = root.path("study", true);
    choice.arm = root.text("arm");
    if (root.has("budget")) choice.budget = root.text("budget");
    if (root.has("fold")) choice.fold = static_cast<int>(root.integer("fold", 0, 0, 1000));
    const StudyArmRuns arm = resolve_study_arm(choice);
    take_runs(arm.runs, arm_source(choice, arm), s);
  }
}

}  // namespace

std::string MapSettings::model_name() const {
  if (runs.size() <= 1) return run.filename().string();
  const auto arm = source.find(", arm ");
  if (arm == std::string::npos) return source;
  return source.substr(arm + 2);  // "arm A, budget B, fold F: N seeds"
}

std::string dense_refusal(const RunInputs& inputs) {
  if (inputs.head_pool == "global") return "";
  return "dense averages the encoder's feature map over each window, but this run's head reads the window out "
         "with head.pool " + inputs.head_pool + " (at its centre pixel): map it with mode: exact, or map a run "
         "fine-tuned with head: {pool: global}";
}

RunInputs read_run_inputs(const fs::path& run) {
  RunInputs inputs;
  ArchiveReader archive(run / "model.pt", ArchiveKind::classifier);
  const ModelSpec spec = archive.model_spec();
  BandNormalisation normalisation;
  archive.inputs(normalisation, inputs.chip_size);
  inputs.bands = normalisation.bands;
  inputs.feature_stride = chip_size_multiple(spec.encoder);
  if (archive.has("head_pool")) inputs.head_pool = archive.text("head_pool");
  inputs.stores = run_stores(run);
  take_store_encoding(inputs.stores.front(), inputs);
  return inputs;
}

MapSettings read_map_config(const ConfigNode& root) {
  MapSettings s;
  read_model_source(root, s);
  s.output = root.path("output", false);
  read_options(root, s);
  s.sensor_given = root.has("sensor");
  s.profile = s.sensor_given ? read_sensor_reference(root, "sensor") : profile_from_run(s.inputs);
  if (s.sensor_given) require_profile_bands(root, "sensor", s.inputs.bands, s.profile);
  const auto items = root.items("scenes");
  if (items.empty()) root.fail("scenes", "required: list at least one scene");
  for (const auto& item : items) {
    SceneSpec scene = read_scene_spec(item, s.profile, false);
    check_scene_bands(item, scene, s.inputs);
    for (const auto& earlier : s.scenes) {
      if (earlier.id == scene.id) item.fail("id", "scene id \"" + scene.id + "\" is used twice; set id:");
    }
    s.scenes.push_back(std::move(scene));
  }
  if (s.sensor_given) settle_processing_baseline(s.profile, s.scenes, items);
  s.align = read_grid_settings(root.section("grid"), s.profile, s.inputs.pixel_size, s.resolution);
  s.config_hash = sha256_hex(resolved_text(root));
  return s;
}

MapSettings map_settings_for_raster(const fs::path& run, const fs::path& raster, const fs::path& output,
                                    const std::optional<StudyArmChoice>& arm) {
  MapSettings s;
  if (arm) {
    StudyArmChoice choice = *arm;
    choice.study = run;
    const StudyArmRuns runs = resolve_study_arm(choice);
    take_runs(runs.runs, arm_source(choice, runs), s);
  } else {
    take_runs({run}, "run " + run.string(), s);
  }
  s.output = output;
  const std::string text = "stride: " + std::to_string(std::max(1, s.inputs.chip_size / 4)) + "\n";
  const ConfigNode defaults = ConfigNode::from_text(text, "defaults", fs::current_path());
  read_options(defaults, s);
  s.profile = profile_from_run(s.inputs);
  const Raster stack = Raster::open(raster);
  if (stack.band_count() != static_cast<int>(s.inputs.bands.size())) {
    std::string names;
    for (const auto& b : s.inputs.bands) names += (names.empty() ? "" : ", ") + b;
    fail_usage(raster.string() + " has " + std::to_string(stack.band_count()) + " bands; the run needs " +
               std::to_string(s.inputs.bands.size()) + " in this order: " + names +
               ". Stack them so (gdalbuildvrt -separate), or write a map config with files: per band");
  }
  SceneSpec scene;
  scene.id = raster.stem().string();
  for (std::size_t b = 0; b < s.inputs.bands.size(); ++b) {
    scene.bands.push_back({s.inputs.bands[b], raster, static_cast<int>(b) + 1});
  }
  s.scenes.push_back(scene);
  s.resolution = s.inputs.pixel_size > 0 ? s.inputs.pixel_size : std::abs(stack.geotransform()[1]);
  s.config_hash = sha256_hex(s.source + "\n" + raster.string());
  return s;
}

std::string to_string(MapMode mode) { return mode == MapMode::dense ? "dense" : "exact"; }

}  // namespace tinct
