#include "chips/store_writer.hpp"

#include <fcntl.h>
#include <unistd.h>

#include <cmath>

#include "chips/band_statistics.hpp"
#include "chips/mapped_file.hpp"
#include "util/error.hpp"
#include "util/stage_times.hpp"
#include "util/version_info.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

// The renames inside the folder are durable only once the folder itself is synced.
void sync_folder(const fs::path& folder) {
  const int fd = ::open(folder.c_str(), O_RDONLY | O_DIRECTORY | O_CLOEXEC);
  if (fd < 0) return;  // best effort, as in util/atomic_file
  ::fsync(fd);
  ::close(fd);
}

StoreLayout checked(StoreLayout layout, const fs::path& target) {
  check_layout(layout, "store " + target.string());
  return layout;
}

std::string common_crs(const std::vector<StoreScene>& scenes) {
  for (const auto& scene : scenes) {
    if (scene.crs != scenes.front().crs) return "";
  }
  return scenes.front().crs;
}

std::string listed(const std::set<std::string>& names) {
  std::string text;
  for (const auto& name : names) text += (text.empty() ? "" : ", ") + name;
  return text;
}

}  // namespace

StoreWriter::StoreWriter(fs::path target, StoreLayout layout, bool replace)
    : layout_(checked(std::move(layout), target)), folder_(std::move(target), replace) {
  band_bytes_ = chip_band_bytes(layout_);
  colour_bytes_ = chip_colour_bytes(layout_);
  valid_bytes_ = chip_valid_bytes(layout_);
  bands_ = std::make_unique<BufferedFile>(folder_.path() / "bands.bin");
  if (layout_.has_colour) colour_ = std::make_unique<BufferedFile>(folder_.path() / "colour.bin");
  valid_ = std::make_unique<BufferedFile>(folder_.path() / "valid.bin");
  chips_csv_ = std::make_unique<BufferedFile>(folder_.path() / "chips.csv", 1 << 20);
  const std::string header = chip_csv_header(layout_.kind == StoreKind::labels) + "\n";
  chips_csv_->write(header.data(), header.size());
  if (layout_.storage == StorageType::uint16) histograms_.emplace(layout_);
}

StoreWriter::~StoreWriter() = default;

void StoreWriter::require_open(const char* step) const {
  if (state_ == State::open) return;
  fail_runtime("store " + target().string() + ": cannot " + step +
               (state_ == State::finished ? " after finish()" : " after an earlier failure"));
}

void StoreWriter::add(const ChipRecord& record, const void* bands, const std::uint8_t* colour,
                      const std::uint8_t* valid) {
  append(record, bands, colour, valid, /*colour_later=*/false);
}

void StoreWriter::add_awaiting_colour(const ChipRecord& record, const void* bands, const std::uint8_t* valid) {
  append(record, bands, nullptr, valid, /*colour_later=*/true);
}

void StoreWriter::add_colour(const std::uint8_t* colour) {
  require_open("add a colour");
  if (chips_awaiting_colour() == 0 || colour == nullptr) {
    fail_runtime("store " + target().string() + ": add_colour() without a chip awaiting its colour");
  }
  state_ = State::failed;
  colour_->write(colour, colour_bytes_);
  ++colour_count_;
  state_ = State::open;
}

void StoreWriter::append(const ChipRecord& record, const void* bands, const std::uint8_t* colour,
                         const std::uint8_t* valid, bool colour_later) {
  require_open("add a chip");
  const auto fail_chip = [&](const std::string& problem) {
    fail_runtime("store " + target().string() + ", chip " + std::to_string(chip_count_) + ": " + problem);
  };
  if (record.index != chip_count_) {
    fail_chip("the record's index is " + std::to_string(record.index) + "; add chips in index order");
  }
  if (bands == nullptr || valid == nullptr) fail_chip("bands and valid are required");
  if (colour_later && !layout_.has_colour) fail_chip("the store has no colour to add later");
  if (!colour_later && (colour != nullptr) != layout_.has_colour) {
    fail_chip(layout_.has_colour ? "colour is required" : "the store has no colour; pass nullptr");
  }
  if (!colour_later && chips_awaiting_colour() > 0) {
    fail_chip(std::to_string(chips_awaiting_colour()) + " earlier chips await their colour; add_colour() first");
  }
  state_ = State::failed;  // until every file has its share of this chip
  bands_->write(bands, band_bytes_);
  if (histograms_) histograms_->add_chip(static_cast<const std::uint16_t*>(bands), valid);
  if (colour_ && colour) colour_->write(colour, colour_bytes_);
  valid_->write(valid, valid_bytes_);
  row_.clear();
  append_chip_row(row_, record, layout_.kind == StoreKind::labels);
  chips_csv_->write(row_.data(), row_.size());
  scenes_seen_.insert(record.scene);
  if (layout_.kind == StoreKind::labels) labels_seen_.insert(record.label);
  ++chip_count_;
  if (colour) ++colour_count_;
  if (!layout_.has_colour) colour_count_ = chip_count_;
  state_ = State::open;
}

void StoreWriter::add_file(const std::string& name, const std::string& contents) {
  require_open("add a file");
  const bool own = name == "manifest.yaml" || name == "bands.bin" || name == "colour.bin" || name == "valid.bin" ||
                   name == "chips.csv";
  if (name.empty() || own || name.find('/') != std::string::npos || name[0] == '.') {
    fail_runtime("store " + target().string() + ": cannot add a file named \"" + name + "\"");
  }
  write_file_atomic(folder_.path() / name, contents);
}

void StoreWriter::finish(StoreManifest header_fields) {
  require_open("finish");
  state_ = State::failed;  // until the rename below succeeds
  if (chip_count_ == 0) {
    fail_runtime("store " + target().string() +
                 ": no chips to write; check the scenes, their nodata and the chip plan");
  }
  if (chips_awaiting_colour() > 0) {
    fail_runtime("store " + target().string() + ": " + std::to_string(chips_awaiting_colour()) +
                 " chips still await their colour at finish()");
  }
  StoreManifest manifest = complete_manifest(std::move(header_fields));
  check_chips_against(manifest);
  for (BufferedFile* file : {bands_.get(), colour_.get(), valid_.get(), chips_csv_.get()}) {
    if (file != nullptr) file->close();
  }
  stage_done("close");
  for (BufferedFile* file : {bands_.get(), colour_.get(), valid_.get(), chips_csv_.get()}) {
    if (file != nullptr) manifest.checksums[file->path().filename().string()] = file->sha256();
  }
  manifest.statistics = histograms_ ? histograms_->statistics() : statistics_of_written();
  stage_done("statistics");
  if (manifest.statistics.front().count == 0) {
    fail_runtime("store " + target().string() + ": no chip has a valid pixel; check nodata and masks");
  }
  write_file_atomic(folder_.path() / "manifest.yaml", manifest_yaml(manifest));
  sync_folder(folder_.path());
  folder_.commit();
  stage_done("manifest");
  state_ = State::finished;
}

StoreManifest StoreWriter::complete_manifest(StoreManifest manifest) const {
  if (!std::isfinite(manifest.pixel_size) || manifest.pixel_size <= 0) {
    fail_runtime("store " + target().string() + ": pixel_size must be > 0");
  }
  manifest.format_version = kStoreFormatVersion;
  manifest.kind = layout_.kind;
  manifest.chip_size = layout_.chip_size;
  manifest.bands = layout_.bands;
  manifest.colour_encoding = layout_.has_colour ? ColourEncoding::cielab8 : ColourEncoding::none;
  manifest.chip_count = chip_count_;
  if (manifest.crs.empty() && !manifest.scenes.empty()) manifest.crs = common_crs(manifest.scenes);
  if (layout_.kind == StoreKind::pairs) manifest.classes.clear();
  if (manifest.tinct_version.empty()) manifest.tinct_version = tinct_version();
  return manifest;
}

void StoreWriter::check_chips_against(const StoreManifest& manifest) const {
  const std::string where = "store " + target().string();
  std::set<std::string> scenes;
  for (const auto& scene : manifest.scenes) scenes.insert(scene.id);
  for (const auto& scene : scenes_seen_) {
    if (!scenes.count(scene)) {
      fail_runtime(where + ": chips come from scene \"" + scene +
                   "\", which is not among the manifest's scenes (" + listed(scenes) + ")");
    }
  }
  const std::set<std::string> classes(manifest.classes.begin(), manifest.classes.end());
  for (const auto& label : labels_seen_) {
    if (!classes.count(label)) {
      fail_runtime(where + ": chip label \"" + label + "\" is not among the classes (" +
                   listed(classes) + ")");
    }
  }
}

std::vector<BandStatistics> StoreWriter::statistics_of_written() const {
  const MappedFile bands = MappedFile::open(folder_.path() / "bands.bin", MapAccess::sequential);
  const MappedFile valid = MappedFile::open(folder_.path() / "valid.bin", MapAccess::sequential);
  return band_statistics(layout_, chip_count_, bands.data(), valid.data());
}

}  // namespace tinct
