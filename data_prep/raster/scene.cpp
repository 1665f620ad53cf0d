#include "raster/scene.hpp"

#include <algorithm>
#include <cmath>
#include <limits>
#include <map>

#include "util/error.hpp"
#include "util/number_text.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

TargetGrid grid_of(const std::vector<fs::path>& files, double resolution) {
  std::vector<Raster> rasters;
  for (const auto& file : files) rasters.push_back(Raster::open(file));
  std::vector<const Raster*> pointers;
  for (const auto& raster : rasters) pointers.push_back(&raster);
  return shared_grid(pointers, resolution);
}

}  // namespace

Scene::Scene(const SceneSpec& spec, const SensorProfile& profile, const std::vector<std::string>& bands,
             double resolution, const AlignSettings& settings)
    : spec_(spec), bands_(bands) {
  std::vector<fs::path> files;
  std::map<fs::path, std::vector<int>> indices_by_file;
  std::vector<std::pair<fs::path, std::size_t>> position;  // per requested band
  for (const auto& name : bands_) {
    const SceneBand* band = spec_.band(name);
    if (!band) {
      fail_usage("scene " + spec_.id + ": has no band " + name + "; add it to the scene's bands or files");
    }
    auto& list = indices_by_file[band->file];
    if (list.empty()) files.push_back(band->file);
    position.emplace_back(band->file, list.size());
    list.push_back(band->index);
  }
  grid_ = grid_of(files, resolution);
  std::map<fs::path, std::size_t> source_of;
  for (const auto& file : files) {
    source_of[file] = sources_.size();
    sources_.push_back(
        std::make_unique<AlignedSource>(file, indices_by_file[file], grid_, settings, profile.nodata));
  }
  for (const auto& [file, plane] : position) slots_.push_back({source_of[file], plane});
  if (spec_.mask) {
    const AlignSettings nearest{Resampling::nearest, Resampling::nearest};
    mask_ = std::make_unique<AlignedSource>(spec_.mask->file, std::vector<int>{spec_.mask->band}, grid_,
                                            nearest, std::nullopt);
  }
}

std::vector<std::string> Scene::data_types() const {
  std::vector<std::string> types;
  for (const auto& slot : slots_) types.push_back(sources_[slot.source]->data_type());
  return types;
}

std::vector<std::string> Scene::alignment_notes() const {
  std::vector<std::string> notes;
  for (const auto& source : sources_) {
    if (!source->warped()) continue;
    notes.push_back(source->file().string() + ": pixel size " + short_text(source->source_pixel_size()) + " -> " +
                    short_text(grid_.pixel_size()) + " (" + to_string(source->method()) + ")");
  }
  return notes;
}

void Scene::read(int col, int row, int width, int height, float* out) const {
  const std::size_t plane = static_cast<std::size_t>(width) * height;
  if (reads_in_order()) {  // one file, bands in the asked order: no staging copy
    sources_.front()->read(col, row, width, height, out);
    if (mask_) apply_mask(col, row, width, height, out);
    return;
  }
  std::vector<std::size_t> offsets(sources_.size());
  std::size_t total = 0;
  for (std::size_t s = 0; s < sources_.size(); ++s) {
    offsets[s] = total;
    total += sources_[s]->band_count() * plane;
  }
  buffer_.resize(total);
  for (std::size_t s = 0; s < sources_.size(); ++s) {
    sources_[s]->read(col, row, width, height, buffer_.data() + offsets[s]);
  }
  for (std::size_t b = 0; b < slots_.size(); ++b) {
    const float* from = buffer_.data() + offsets[slots_[b].source] + slots_[b].plane * plane;
    std::copy(from, from + plane, out + b * plane);
  }
  if (mask_) apply_mask(col, row, width, height, out);
}

bool Scene::reads_in_order() const {
  if (sources_.size() != 1) return false;
  for (std::size_t b = 0; b < slots_.size(); ++b) {
    if (slots_[b].plane != b) return false;
  }
  return true;
}

void Scene::apply_mask(int col, int row, int width, int height, float* out) const {
  const std::size_t plane = static_cast<std::size_t>(width) * height;
  std::vector<float> mask(plane);
  mask_->read(col, row, width, height, mask.data());
  const auto& drop = spec_.mask->drop;
  const float nan = std::numeric_limits<float>::quiet_NaN();
  for (std::size_t i = 0; i < plane; ++i) {
    const bool dropped = std::isnan(mask[i]) ||
                         std::find(drop.begin(), drop.end(), static_cast<double>(mask[i])) != drop.end();
    if (!dropped) continue;
    for (std::size_t b = 0; b < slots_.size(); ++b) out[b * plane + i] = nan;
  }
}

}  // namespace tinct
