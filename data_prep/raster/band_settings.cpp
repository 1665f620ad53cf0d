#include "raster/band_settings.hpp"

#include <algorithm>

#include "util/nearest_name.hpp"

namespace tinct {

void require_profile_bands(const ConfigNode& node, const std::string& key, const std::vector<std::string>& names,
                           const SensorProfile& profile) {
  for (const auto& name : names) {
    if (profile.band(name)) continue;
    std::string message = "band \"" + name + "\" is not in the sensor profile " + profile.name;
    const std::string near = nearest_name(name, profile.band_names());
    if (!near.empty()) message += "; did you mean \"" + near + "\"?";
    node.fail(key, message);
  }
}

std::vector<std::string> read_input_bands(const ConfigNode& root, const SensorProfile& profile) {
  const std::vector<std::string> inputs = root.texts("inputs");
  if (inputs.empty()) root.fail("inputs", "name at least one input band");
  require_profile_bands(root, "inputs", inputs, profile);
  for (std::size_t i = 0; i < inputs.size(); ++i) {
    if (std::find(inputs.begin(), inputs.begin() + static_cast<long>(i), inputs[i]) != inputs.begin() + static_cast<long>(i)) {
      root.fail("inputs", "band " + inputs[i] + " is listed twice");
    }
  }
  return inputs;
}

AlignSettings read_grid_settings(const ConfigNode& node, const SensorProfile& profile, double& resolution) {
  resolution = node.number("resolution", profile.reference_resolution, 1e-9);
  AlignSettings align;
  const std::vector<std::string> methods{"near", "bilinear", "cubic", "average"};
  align.refine = resampling_from_string(node.choice("refine", methods, "bilinear"));
  align.coarsen = resampling_from_string(node.choice("coarsen", methods, "average"));
  node.finish();
  return align;
}

}  // namespace tinct
