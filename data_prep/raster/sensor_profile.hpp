// A sensor profile: the bands a sensor delivers (name, wavelength, native
// resolution) and how stored values become reflectance. Profiles live in
// configs/sensors/; a config names one and may override any of its fields.
#pragma once

#include <filesystem>
#include <optional>
#include <string>
#include <vector>

#include "util/config_node.hpp"

namespace tinct {

struct SensorBand {
  std::string name;
  double centre_nm = 0;
  double width_nm = 0;
  double resolution = 0;  // metres
};

// A band the sensor has but the profile leaves out (a thermal or panchromatic
// band, a band the product level does not deliver), so errors can say why.
struct LeftOutBand {
  std::string name;
  std::string why;
};

struct SensorProfile {
  std::string name;
  std::string description;
  double reference_resolution = 0;  // metres: the grid all bands are aligned to
  std::optional<double> nodata;
  std::optional<double> saturated;
  // reflectance = (stored + offset) * scale
  double scale = 1.0;
  double offset = 0.0;
  // Sentinel-2 processing baseline 04.00 and later shifts stored values; when
  // `baseline_04` is set, `baseline_04_offset` replaces `offset`.
  bool baseline_04 = false;
  double baseline_04_offset = 0.0;
  bool baseline_04_given = false;  // set in the config itself, not by the profile file
  std::vector<SensorBand> bands;
  std::vector<LeftOutBand> left_out;

  double effective_offset() const { return baseline_04 ? baseline_04_offset : offset; }
  double reflectance(double stored) const { return (stored + effective_offset()) * scale; }
  const SensorBand* band(const std::string& name) const;
  const LeftOutBand* left_out_band(const std::string& name) const;
  std::vector<std::string> band_names() const;
};

// Reads a profile's fields from `node`, taking every field not given from `base`.
SensorProfile read_sensor_profile(const ConfigNode& node, const SensorProfile& base = {});

// Reads the profile file itself (its top level carries `config: sensor`).
SensorProfile load_sensor_profile_file(const std::filesystem::path& file);

// A profile given in a config: a name ("sentinel2-l2a"), a path to a .yaml file,
// or a mapping {profile: NAME, ...overrides}. Names are looked up in the sensor
// folders (see sensor_folders()).
SensorProfile read_sensor_reference(const ConfigNode& parent, const std::string& key);

// Where profile names are looked up, in order: $TINCT_CONFIG_DIR/sensors, then
// configs/sensors beside the executable's folder, then share/tinct/configs/sensors.
std::vector<std::filesystem::path> sensor_folders();

// The names of the profiles found in sensor_folders(), sorted, each once.
std::vector<std::string> sensor_profile_names();

}  // namespace tinct
