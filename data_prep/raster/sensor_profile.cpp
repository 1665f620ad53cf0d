#include "raster/sensor_profile.hpp"

#include <unistd.h>

#include <algorithm>
#include <cstdlib>
#include <set>

#include "util/error.hpp"
#include "util/nearest_name.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

std::optional<double> optional_number(const ConfigNode& node, const std::string& key,
                                      const std::optional<double>& base) {
  if (node.peek(key) == std::optional<std::string>("none")) {
    node.text(key);
    return std::nullopt;
  }
  if (!node.has(key) && !base) {
    node.allow(key);
    return std::nullopt;
  }
  return node.number(key, base);
}

std::vector<SensorBand> read_bands(const ConfigNode& node, const std::vector<SensorBand>& base) {
  if (!node.has("bands")) {
    node.allow("bands");
    return base;
  }
  std::vector<SensorBand> bands;
  for (const ConfigNode& item : node.items("bands")) {
    SensorBand band;
    band.name = item.text("name");
    band.centre_nm = item.number("centre_nm", 0.0, 0.0);
    band.width_nm = item.number("width_nm", 0.0, 0.0);
    band.resolution = item.number("resolution", std::nullopt, 1e-9);
    item.finish();
    for (const auto& earlier : bands) {
      if (earlier.name == band.name) item.fail("name", "band \"" + band.name + "\" is listed twice");
    }
    bands.push_back(band);
  }
  if (bands.empty()) node.fail("bands", "a sensor profile needs at least one band");
  return bands;
}

std::vector<LeftOutBand> read_left_out(const ConfigNode& node, const std::vector<LeftOutBand>& base) {
  if (!node.has("left_out")) {
    node.allow("left_out");
    return base;
  }
  std::vector<LeftOutBand> bands;
  for (const ConfigNode& item : node.items("left_out")) {
    bands.push_back({item.text("name"), item.text("why")});
    item.finish();
  }
  return bands;
}

fs::path executable_folder() {
  char buffer[4096];
  const ssize_t length = ::readlink("/proc/self/exe", buffer, sizeof(buffer) - 1);
  if (length <= 0) return fs::current_path();
  buffer[length] = '\0';
  return fs::path(buffer).parent_path();
}

fs::path find_named_profile(const ConfigNode& parent, const std::string& key, const std::string& name) {
  if (name.size() > 5 && name.substr(name.size() - 5) == ".yaml") {
    fs::path path = name;
    if (path.is_relative()) path = parent.folder() / path;
    if (!fs::exists(path)) parent.fail(key, "sensor profile file not found: " + path.string());
    return path;
  }
  std::string searched;
  for (const fs::path& folder : sensor_folders()) {
    const fs::path candidate = folder / (name + ".yaml");
    if (fs::exists(candidate)) return candidate;
    searched += (searched.empty() ? "" : ", ") + folder.string();
  }
  const std::vector<std::string> known = sensor_profile_names();
  std::string list;
  for (const auto& profile : known) list += (list.empty() ? "" : ", ") + profile;
  const std::string near = nearest_name(name, known);
  parent.fail(key, "no sensor profile named \"" + name + "\"" +
                       (near.empty() ? "" : "; did you mean \"" + near + "\"?") +
                       (known.empty() ? " No profiles were found" : " The profiles are " + list) + " (in " +
                       searched + "); give one of them or a path to a .yaml profile of your own");
}

}  // namespace

const SensorBand* SensorProfile::band(const std::string& wanted) const {
  for (const auto& b : bands) {
    if (b.name == wanted) return &b;
  }
  return nullptr;
}

const LeftOutBand* SensorProfile::left_out_band(const std::string& wanted) const {
  for (const auto& b : left_out) {
    if (b.name == wanted) return &b;
  }
  return nullptr;
}

std::vector<std::string> SensorProfile::band_names() const {
  std::vector<std::string> names;
  for (const auto& b : bands) names.push_back(b.name);
  return names;
}

SensorProfile read_sensor_profile(const ConfigNode& node, const SensorProfile& base) {
  SensorProfile profile;
  profile.name = node.text("name", base.name.empty() ? std::nullopt : std::optional<std::string>(base.name));
  profile.description = node.text("description", base.description);
  profile.reference_resolution = node.number(
      "reference_resolution",
      base.reference_resolution > 0 ? std::optional<double>(base.reference_resolution) : std::nullopt,
      1e-9);
  profile.nodata = optional_number(node, "nodata", base.nodata);
  profile.saturated = optional_number(node, "saturated", base.saturated);
  profile.scale = node.number("scale", base.scale);
  if (profile.scale == 0) node.fail("scale", "must not be 0 (reflectance = (stored + offset) * scale)");
  profile.offset = node.number("offset", base.offset);
  profile.baseline_04_given = node.has("baseline_04");
  profile.baseline_04 = node.flag("baseline_04", base.baseline_04);
  profile.baseline_04_offset = node.number("baseline_04_offset", base.baseline_04_offset);
  profile.bands = read_bands(node, base.bands);
  profile.left_out = read_left_out(node, base.left_out);
  for (const auto& left : profile.left_out) {
    if (profile.band(left.name)) node.fail("left_out", "band \"" + left.name + "\" is listed in bands too");
  }
  return profile;
}

SensorProfile load_sensor_profile_file(const fs::path& file) {
  const ConfigNode root = ConfigNode::load(file);
  root.choice("config", {"sensor"});
  SensorProfile profile = read_sensor_profile(root);
  profile.baseline_04_given = false;  // the profile's own value is a default, not the user's word
  root.finish();
  return profile;
}

SensorProfile read_sensor_reference(const ConfigNode& parent, const std::string& key) {
  if (!parent.has(key)) parent.fail(key, "required: a sensor profile name or {profile: NAME, ...}");
  if (!parent.is_mapping(key)) {
    const std::string name = parent.text(key);
    return load_sensor_profile_file(find_named_profile(parent, key, name));
  }
  const ConfigNode overrides = parent.section(key);
  const std::string name = overrides.text("profile");
  const SensorProfile base = load_sensor_profile_file(find_named_profile(overrides, "profile", name));
  SensorProfile profile = read_sensor_profile(overrides, base);
  overrides.finish();
  return profile;
}

std::vector<fs::path> sensor_folders() {
  std::vector<fs::path> folders;
  if (const char* dir = std::getenv("TINCT_CONFIG_DIR")) folders.push_back(fs::path(dir) / "sensors");
  const fs::path exe = executable_folder();
  folders.push_back(exe.parent_path() / "configs" / "sensors");
  folders.push_back(exe.parent_path() / "share" / "tinct" / "configs" / "sensors");
  return folders;
}

std::vector<std::string> sensor_profile_names() {
  std::set<std::string> names;
  for (const fs::path& folder : sensor_folders()) {
    std::error_code ec;
    for (const auto& entry : fs::directory_iterator(folder, ec)) {
      if (entry.path().extension() == ".yaml") names.insert(entry.path().stem().string());
    }
  }
  return {names.begin(), names.end()};
}

}  // namespace tinct
