#include "chips/store_manifest.hpp"

#include <yaml-cpp/yaml.h>

#include <cmath>
#include <set>

#include "util/number_text.hpp"
#include "util/config_node.hpp"
#include "util/error.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

void emit_text(YAML::Emitter& out, const std::string& key, const std::string& value) {
  // Quoted always, so that ids such as "null", "~" or "2023" read back as the same text.
  out << YAML::Key << key << YAML::Value << YAML::DoubleQuoted << value;
}

void emit_number(YAML::Emitter& out, const std::string& key, double value) {
  out << YAML::Key << key << YAML::Value << exact_text(value);
}

void emit_bands(YAML::Emitter& out, const std::vector<StoreBand>& bands) {
  out << YAML::Key << "bands" << YAML::Value << YAML::BeginSeq;
  for (const auto& band : bands) {
    out << YAML::BeginMap;
    emit_text(out, "name", band.name);
    out << YAML::Key << "storage" << YAML::Value << to_string(band.storage);
    emit_number(out, "scale", band.scale);
    emit_number(out, "offset", band.offset);
    out << YAML::EndMap;
  }
  out << YAML::EndSeq;
}

void emit_statistics(YAML::Emitter& out, const StoreManifest& manifest) {
  out << YAML::Key << "statistics" << YAML::Value << YAML::BeginMap;
  for (std::size_t i = 0; i < manifest.statistics.size() && i < manifest.bands.size(); ++i) {
    const BandStatistics& stats = manifest.statistics[i];
    out << YAML::Key << YAML::DoubleQuoted << manifest.bands[i].name << YAML::Value << YAML::BeginMap;
    out << YAML::Key << "count" << YAML::Value << static_cast<long long>(stats.count);
    emit_number(out, "mean", stats.mean);
    emit_number(out, "std", stats.std);
    emit_number(out, "p02", stats.p02);
    emit_number(out, "p98", stats.p98);
    out << YAML::EndMap;
  }
  out << YAML::EndMap;
}

void emit_scenes(YAML::Emitter& out, const std::vector<StoreScene>& scenes) {
  out << YAML::Key << "scenes" << YAML::Value << YAML::BeginSeq;
  for (const auto& scene : scenes) {
    out << YAML::BeginMap;
    emit_text(out, "id", scene.id);
    emit_text(out, "path", scene.path);
    emit_text(out, "date", scene.date);
    emit_text(out, "crs", scene.crs);
    out << YAML::Key << "notes" << YAML::Value << YAML::BeginMap;
    for (const auto& [key, value] : scene.notes) emit_text(out, key, value);
    out << YAML::EndMap << YAML::EndMap;
  }
  out << YAML::EndSeq;
}

StoreKind read_kind(const ConfigNode& node) {
  return node.choice("kind", {"pairs", "labels"}) == "labels" ? StoreKind::labels : StoreKind::pairs;
}

StorageType read_storage(const ConfigNode& node) {
  return node.choice("storage", {"uint16", "float32"}) == "float32" ? StorageType::float32
                                                                     : StorageType::uint16;
}

void require(const ConfigNode& node, const std::string& key, const std::string& expected) {
  if (!node.has(key)) node.fail(key, "required: expected " + expected);
}

std::vector<StoreBand> read_bands(const ConfigNode& root) {
  require(root, "bands", "a list of bands");
  std::vector<StoreBand> bands;
  for (const ConfigNode& item : root.items("bands")) {
    StoreBand band;
    band.name = item.text("name");
    band.storage = read_storage(item);
    band.scale = item.number("scale");
    band.offset = item.number("offset");
    bands.push_back(band);
  }
  return bands;
}

std::vector<BandStatistics> read_statistics(const ConfigNode& root, const std::vector<StoreBand>& bands) {
  require(root, "statistics", "a mapping of band name to statistics");
  const ConfigNode section = root.section("statistics");
  std::vector<BandStatistics> statistics;
  for (const auto& band : bands) {
    const ConfigNode entry = section.section(band.name);
    BandStatistics stats;
    stats.count = entry.integer("count", std::nullopt, 0);
    stats.mean = entry.number("mean");
    stats.std = entry.number("std", std::nullopt, 0);
    stats.p02 = entry.number("p02");
    stats.p98 = entry.number("p98");
    statistics.push_back(stats);
  }
  return statistics;
}

std::vector<StoreScene> read_scenes(const ConfigNode& root) {
  require(root, "scenes", "a list of scenes");
  std::vector<StoreScene> scenes;
  for (const ConfigNode& item : root.items("scenes")) {
    StoreScene scene;
    scene.id = item.text("id");
    scene.path = item.text("path");
    scene.date = item.text("date");
    scene.crs = item.text("crs");
    const ConfigNode notes = item.section("notes");
    for (const auto& key : notes.keys()) scene.notes[key] = notes.text(key);
    scenes.push_back(scene);
  }
  return scenes;
}

std::map<std::string, std::string> read_checksums(const ConfigNode& root) {
  std::map<std::string, std::string> checksums;
  if (!root.has("checksums")) return checksums;
  const ConfigNode section = root.section("checksums");
  for (const auto& name : section.keys()) {
    const std::string digest = section.text(name);
    if (digest.size() != 64 || digest.find_first_not_of("0123456789abcdef") != std::string::npos) {
      section.fail(name, "must be a SHA-256 in 64 lowercase hex digits");
    }
    checksums[name] = digest;
  }
  return checksums;
}

void check_version(const ConfigNode& root, const fs::path& file, StoreManifest& manifest) {
  const std::int64_t version = root.integer("format_version", std::nullopt, 1);
  if (version > kStoreFormatVersion) {
    fail_runtime(file.string() + ": the store has format_version " + std::to_string(version) +
                 ", newer than this tinct reads (up to " + std::to_string(kStoreFormatVersion) +
                 "); upgrade tinct to read this store");
  }
  manifest.format_version = static_cast<int>(version);
}

StoreManifest parse_manifest(const ConfigNode& root, const fs::path& file) {
  StoreManifest manifest;
  check_version(root, file, manifest);  // first: a newer format may lack the keys below
  manifest.kind = read_kind(root);
  manifest.chip_size = static_cast<int>(root.integer("chip_size", std::nullopt, 1, 65536));
  manifest.bands = read_bands(root);
  manifest.colour_encoding = root.choice("colour_encoding", {"none", "cielab8"}) == "cielab8"
                                 ? ColourEncoding::cielab8
                                 : ColourEncoding::none;
  manifest.crs = root.text("crs");
  manifest.pixel_size = root.number("pixel_size", std::nullopt, 0);
  manifest.chip_count = root.integer("chip_count", std::nullopt, 1);
  manifest.statistics = read_statistics(root, manifest.bands);
  if (manifest.kind == StoreKind::labels) manifest.classes = root.texts("classes");
  manifest.scenes = read_scenes(root);
  manifest.config_hash = root.text("config_hash");
  manifest.tinct_version = root.text("tinct_version");
  manifest.checksums = read_checksums(root);
  check_layout(layout_of(manifest), file.string());
  return manifest;
}

}  // namespace

StoreLayout layout_of(const StoreManifest& manifest) {
  StoreLayout layout;
  layout.kind = manifest.kind;
  layout.chip_size = manifest.chip_size;
  layout.bands = manifest.bands;
  layout.has_colour = manifest.colour_encoding != ColourEncoding::none;
  if (!manifest.bands.empty()) layout.storage = manifest.bands.front().storage;
  return layout;
}

void check_layout(const StoreLayout& layout, const std::string& where) {
  if (layout.chip_size < 1 || layout.chip_size > 65536) {
    fail_runtime(where + ": chip_size " + std::to_string(layout.chip_size) + " must be from 1 to 65536");
  }
  if (layout.bands.empty()) fail_runtime(where + ": a store needs at least one band");
  std::set<std::string> names;
  for (const auto& band : layout.bands) {
    if (band.name.empty()) fail_runtime(where + ": a band has no name");
    if (!names.insert(band.name).second) fail_runtime(where + ": band " + band.name + " appears twice");
    if (band.storage != layout.storage) {
      fail_runtime(where + ": band " + band.name + " is stored as " + to_string(band.storage) +
                   " but the store holds " + to_string(layout.storage) + ": one storage type per store");
    }
    if (!std::isfinite(band.scale) || band.scale <= 0 || !std::isfinite(band.offset)) {
      fail_runtime(where + ": band " + band.name + " needs a finite scale > 0 and a finite offset");
    }
  }
}

std::int64_t storage_bytes(StorageType storage) { return storage == StorageType::uint16 ? 2 : 4; }

std::int64_t chip_band_bytes(const StoreLayout& layout) {
  return static_cast<std::int64_t>(layout.bands.size()) * chip_valid_bytes(layout) *
         storage_bytes(layout.storage);
}

std::int64_t chip_colour_bytes(const StoreLayout& layout) {
  return layout.has_colour ? 3 * chip_valid_bytes(layout) : 0;
}

std::int64_t chip_valid_bytes(const StoreLayout& layout) {
  return static_cast<std::int64_t>(layout.chip_size) * layout.chip_size;
}

std::string to_string(StoreKind kind) { return kind == StoreKind::labels ? "labels" : "pairs"; }

std::string to_string(StorageType storage) {
  return storage == StorageType::float32 ? "float32" : "uint16";
}

std::string to_string(ColourEncoding encoding) {
  return encoding == ColourEncoding::cielab8 ? "cielab8" : "none";
}

std::string rebuild_command(StoreKind kind) {
  return kind == StoreKind::labels ? "tinct label" : "tinct pair";
}

std::string manifest_yaml(const StoreManifest& manifest) {
  YAML::Emitter out;
  out << YAML::BeginMap;
  out << YAML::Key << "format_version" << YAML::Value << manifest.format_version;
  out << YAML::Key << "kind" << YAML::Value << to_string(manifest.kind);
  out << YAML::Key << "chip_size" << YAML::Value << manifest.chip_size;
  emit_bands(out, manifest.bands);
  out << YAML::Key << "colour_encoding" << YAML::Value << to_string(manifest.colour_encoding);
  emit_text(out, "crs", manifest.crs);
  emit_number(out, "pixel_size", manifest.pixel_size);
  out << YAML::Key << "chip_count" << YAML::Value << static_cast<long long>(manifest.chip_count);
  emit_statistics(out, manifest);
  if (manifest.kind == StoreKind::labels) {
    out << YAML::Key << "classes" << YAML::Value << YAML::BeginSeq;
    for (const auto& name : manifest.classes) out << YAML::DoubleQuoted << name;
    out << YAML::EndSeq;
  }
  emit_scenes(out, manifest.scenes);
  emit_text(out, "config_hash", manifest.config_hash);
  emit_text(out, "tinct_version", manifest.tinct_version);
  if (!manifest.checksums.empty()) {
    out << YAML::Key << "checksums" << YAML::Value << YAML::BeginMap;
    for (const auto& [name, digest] : manifest.checksums) emit_text(out, name, digest);
    out << YAML::EndMap;
  }
  out << YAML::EndMap;
  return std::string(out.c_str()) + "\n";
}

StoreManifest read_manifest(const fs::path& file) {
  if (!fs::is_regular_file(file)) {
    fail_runtime(file.string() + " is missing: " + file.parent_path().string() +
                 " is not a complete tinct store; rebuild it with tinct pair or tinct label");
  }
  try {
    return parse_manifest(ConfigNode::load(file), file);
  } catch (const Error& e) {
    if (e.kind() == ErrorKind::runtime) throw;
    // ConfigNode reports config mistakes as usage errors; here the data is damaged.
    fail_runtime(std::string(e.what()) +
                 "; the manifest is damaged or was edited: rebuild the store with tinct pair or tinct label");
  }
}

}  // namespace tinct
