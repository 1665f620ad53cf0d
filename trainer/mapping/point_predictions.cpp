#include "mapping/point_predictions.hpp"

#include <cmath>
#include <limits>
#include <memory>

#include "labels/csv_table.hpp"
#include "labels/label_matcher.hpp"
#include "mapping/map_caution.hpp"
#include "mapping/window_cells.hpp"
#include "raster/point_package.hpp"
#include "raster/point_transform.hpp"
#include "raster/scene.hpp"
#include "raster/vector_layer.hpp"
#include "runs/metrics_log.hpp"
#include "util/atomic_file.hpp"
#include "util/csv_field.hpp"
#include "util/error.hpp"
#include "util/log.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

struct InputPoint {
  std::string id;
  double x = 0, y = 0;
};

struct PointSet {
  std::string crs;  // definition PointTransform reads
  std::vector<InputPoint> points;
};

double parse_number(const std::string& text, const fs::path& file, int line, const std::string& column) {
  try {
    std::size_t used = 0;
    const double value = std::stod(text, &used);
    if (used == text.size() && std::isfinite(value)) return value;
  } catch (const std::exception&) {
  }
  fail_usage(file.string() + " line " + std::to_string(line) + ": " + column + " \"" + text +
             "\" is not a number");
}

PointSet read_csv_points(const fs::path& file, const std::string& scene_crs) {
  const CsvTable table = read_csv_table(file);
  auto x = table.column("x"), y = table.column("y");
  PointSet set{scene_crs, {}};
  if (!x || !y) {
    x = table.column("lon");
    y = table.column("lat");
    set.crs = "EPSG:4326";
  }
  if (!x || !y) {
    fail_usage(file.string() + ": needs columns x,y (in the first scene's CRS) or lon,lat (WGS 84)");
  }
  const auto id = table.column("id");
  for (std::size_t i = 0; i < table.rows.size(); ++i) {
    const CsvRow& row = table.rows[i];
    set.points.push_back({id ? row.fields[*id] : std::to_string(i + 1),
                          parse_number(row.fields[*x], file, row.line, table.header[*x]),
                          parse_number(row.fields[*y], file, row.line, table.header[*y])});
  }
  return set;
}

// A point's id: the layer's id field (OGR matches field names in any case: ID, Id), else
// (no such field, or null there) its feature id.
PointSet read_vector_points(const fs::path& file) {
  const VectorLayer layer = VectorLayer::open(file, "", "--points");
  PointSet set{layer.crs_wkt(), {}};
  if (set.crs.empty()) fail_usage(file.string() + ": the layer has no CRS; give one, or use a CSV with lon,lat");
  layer.for_each_feature({layer.field_index("id")}, [&](const VectorFeature& f) {
    if (f.geometry.kind != GeometryKind::point) {
      fail_usage(file.string() + ": feature " + std::to_string(f.fid) + " is a " + f.geometry.type_name +
                 "; --points takes points");
    }
    const FieldValue& id = f.fields.front();
    set.points.push_back({id.present ? id.text : std::to_string(f.fid), f.geometry.x, f.geometry.y});
  });
  return set;
}

struct PointResult {
  std::string scene;
  double valid_fraction = 0;
  CellValues cell;
};

class PointMapper {
 public:
  explicit PointMapper(const MapContext& context) : c_(context), encoding_(input_encoding(c_.settings, c_.model.normalisation())) {
    for (const SceneSpec& spec : c_.settings.scenes) {
      scenes_.push_back(std::make_unique<Scene>(spec, c_.settings.profile, c_.settings.inputs.bands,
                                                c_.settings.resolution, c_.settings.align));
    }
  }

  const std::string& crs_of_first() const { return scenes_.front()->grid().crs_wkt; }

  PointResult predict(const InputPoint& point, const std::string& crs) {
    PointResult result;
    for (const auto& scene : scenes_) {
      double x = point.x, y = point.y;
      if (!transform_for(crs, scene->grid().crs_wkt).apply(x, y)) continue;
      const int size = c_.model.chip_size();
      const auto chip = chip_around(scene->grid(), x, y, size);
      if (!chip) continue;
      const double fraction = read_window(*scene, chip->col, chip->row);
      if (result.scene.empty() || fraction > result.valid_fraction) {
        result.scene = scene->spec().id;
        result.valid_fraction = fraction;
      }
      if (fraction < c_.settings.min_valid) continue;
      WindowOutputs outputs;
      c_.model.exact(window_.data(), 1, outputs);
      std::vector<CellValues> cells(1);
      cells[0].valid = true;
      fill_cells(outputs, static_cast<int>(c_.model.classes().size()), c_.model.feature_count(), c_.evidence,
                 c_.threads, true, cells);
      result.cell = cells[0];
      result.scene = scene->spec().id;
      result.valid_fraction = fraction;
      return result;
    }
    return result;
  }

 private:
  // Reads the window into window_ as model inputs; returns its valid fraction.
  double read_window(const Scene& scene, int col, int row) {
    const int size = c_.model.chip_size();
    const std::size_t area = static_cast<std::size_t>(size) * size, bands = c_.settings.inputs.bands.size();
    window_.resize(bands * area);
    scene.read(col, row, size, size, window_.data());
    std::vector<std::uint8_t> valid(area, 1);
    for (std::size_t i = 0; i < bands * area; ++i) {
      if (!std::isfinite(window_[i])) valid[i % area] = 0;
    }
    std::size_t count = 0;
    for (std::size_t b = 0; b < bands; ++b) {
      for (std::size_t i = 0; i < area; ++i) {
        float& v = window_[b * area + i];
        v = valid[i] ? encoding_.encode(b, v) : 0.0f;
      }
    }
    for (auto v : valid) count += v;
    return static_cast<double>(count) / static_cast<double>(area);
  }

  const PointTransform& transform_for(const std::string& from, const std::string& to) {
    const std::string key = from + "\n" + to;
    auto found = transforms_.find(key);
    if (found == transforms_.end()) {
      found = transforms_.emplace(key, std::make_unique<PointTransform>(from, to, "--points CRS")).first;
    }
    return *found->second;
  }

  const MapContext& c_;
  InputEncoding encoding_;
  std::vector<std::unique_ptr<Scene>> scenes_;
  std::map<std::string, std::unique_ptr<PointTransform>> transforms_;
  std::vector<float> window_;
};

}  // namespace

void predict_points(const fs::path& file, const MapContext& context, const fs::path& folder) {
  if (!fs::exists(file)) fail_usage("--points " + file.string() + ": file not found");
  PointMapper mapper(context);
  const std::string ext = file.extension().string();
  const PointSet set = ext == ".csv" || ext == ".CSV" ? read_csv_points(file, mapper.crs_of_first())
                                                      : read_vector_points(file);
  const std::vector<std::string>& classes = context.model.classes();
  std::vector<std::string> text_fields{"id", "scene", "predicted"};
  std::vector<std::string> number_fields{"valid_fraction"};
  for (const auto& name : classes) number_fields.push_back("p_" + name);
  const bool ensemble = context.model.is_ensemble();
  number_fields.push_back("uncertainty");
  if (ensemble) number_fields.push_back("disagreement");
  number_fields.insert(number_fields.end(), {"aoa_index", "inside_aoa"});

  std::string csv = "id,x,y,scene,valid_fraction,predicted";
  for (const auto& name : classes) csv += ",p_" + csv_field(name);
  csv += std::string(",uncertainty") + (ensemble ? ",disagreement" : "") + ",aoa_index,inside_aoa\n";
  std::vector<PackagePoint> package;
  std::int64_t mapped = 0;
  const double nan = std::numeric_limits<double>::quiet_NaN();
  for (const InputPoint& point : set.points) {
    const PointResult r = mapper.predict(point, set.crs);
    const bool ok = r.cell.valid;
    mapped += ok ? 1 : 0;
    PackagePoint p{point.x, point.y, {point.id, r.scene, ok ? classes[r.cell.predicted] : ""}, {r.valid_fraction}};
    csv += csv_field(point.id) + "," + metric_text(point.x) + "," + metric_text(point.y) + "," + csv_field(r.scene) +
           "," + metric_text(r.valid_fraction) + "," + (ok ? csv_field(classes[r.cell.predicted]) : "");
    for (std::size_t k = 0; k < classes.size(); ++k) {
      p.numbers.push_back(ok ? r.cell.probabilities[k] : nan);
      csv += "," + (ok ? metric_text(r.cell.probabilities[k]) : "");
    }
    const bool aoa = ok && context.evidence.applicability.has_value();
    p.numbers.push_back(ok ? r.cell.uncertainty : nan);
    csv += "," + (ok ? metric_text(r.cell.uncertainty) : "");
    if (ensemble) {
      p.numbers.push_back(ok ? r.cell.disagreement : nan);
      csv += "," + (ok ? metric_text(r.cell.disagreement) : "");
    }
    p.numbers.insert(p.numbers.end(), {aoa ? r.cell.aoa_index : nan, aoa ? (r.cell.inside ? 1.0 : 0.0) : nan});
    csv += "," + (aoa ? metric_text(r.cell.aoa_index) : "") +
           "," + (aoa ? std::string(r.cell.inside ? "1" : "0") : "") + "\n";
    package.push_back(std::move(p));
  }
  const std::string crs_wkt = set.crs == "EPSG:4326" ? "EPSG:4326" : set.crs;
  write_file_atomic(folder / "points.csv", csv);
  write_file_atomic(folder / "points-crs.txt", crs_wkt + "\n");
  write_point_package(folder / "points.gpkg", "points", crs_wkt, text_fields, number_fields, package);
  write_file_atomic(folder / "CAUTION.txt", std::string(kMapCaution) + "\n");
  log::info("map: " + std::to_string(mapped) + " of " + std::to_string(set.points.size()) +
            " points predicted (the others lie outside every scene or on too few valid pixels); " +
            (folder / "points.csv").string());
}

}  // namespace tinct
