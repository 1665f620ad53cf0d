#include "raster/band_settings.hpp"

#include <algorithm>
#include <cctype>

#include "chips/chip_plan.hpp"
#include "util/log.hpp"
#include "util/nearest_name.hpp"
#include "util/number_text.hpp"

namespace tinct {
namespace {

// Upper case, leading zeros of digit runs dropped: "b04" and "B4" both read "B4".
std::string band_key(const std::string& name) {
  std::string key;
  bool in_digits = false;
  for (char c : name) {
    const bool digit = std::isdigit(static_cast<unsigned char>(c)) != 0;
    if (digit && c == '0' && !in_digits) continue;
    in_digits = digit;
    key += static_cast<char>(std::toupper(static_cast<unsigned char>(c)));
  }
  return key;
}

// Band names are short and differ in one digit ("B6" is one edit from "B1" .. "B7"),
// so edit distance alone suggests nonsense. Suggest a band only when it is the same
// name but for case and zero padding, or a word one slip away ("bleu" -> "blue").
std::string close_band(const std::string& name, const std::vector<std::string>& bands) {
  for (const auto& band : bands) {
    if (band_key(band) == band_key(name)) return band;
  }
  const bool has_digit = std::any_of(name.begin(), name.end(), [](unsigned char c) { return std::isdigit(c); });
  if (has_digit || name.size() < 4) return "";
  for (const auto& band : bands) {
    if (edit_distance(name, band) <= 1) return band;
  }
  return "";
}

}  // namespace

void require_profile_bands(const ConfigNode& node, const std::string& key, const std::vector<std::string>& names,
                           const SensorProfile& profile) {
  for (const auto& name : names) {
    if (profile.band(name)) continue;
    std::string message = "band \"" + name + "\" is not in the sensor profile " + profile.name;
    std::string list;
    for (const auto& band : profile.band_names()) list += (list.empty() ? "" : ", ") + band;
    if (const LeftOutBand* left = profile.left_out_band(name)) {
      node.fail(key, message + ": the sensor has it but the profile leaves it out (" + left->why +
                         "); choose from its bands (" + list + "), or write a profile of your own that lists " +
                         name + " (configs/sensors/generic.yaml shows how)");
    }
    const std::string near = close_band(name, profile.band_names());
    if (!near.empty()) message += "; did you mean \"" + near + "\"?";
    node.fail(key, message + " (its bands: " + list + ")");
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

int read_chip_size(const ConfigNode& chips) {
  const auto size = static_cast<int>(chips.integer("size", 64, kChipSizeMultiple, 1024));
  if (size % kChipSizeMultiple != 0) {
    const int below = size / kChipSizeMultiple * kChipSizeMultiple;
    chips.fail("size", std::to_string(size) + " is not a multiple of " + std::to_string(kChipSizeMultiple) +
                           ": the encoders take chips whose sides are multiples of 16 (compact) or 32 (resnet18, "
                           "resnet34); use " + std::to_string(below) + " or " +
                           std::to_string(below + kChipSizeMultiple));
  }
  return size;
}

AlignSettings read_grid_settings(const ConfigNode& node, const SensorProfile& profile,
                                 std::optional<double> scenes_pixel, double& resolution) {
  if (!node.has("resolution")) {
    log::info(scenes_pixel ? "grid.resolution not given: the scenes' own " + short_text(*scenes_pixel) + " m pixels"
                           : "grid.resolution not given and the band files' pixel sizes differ: the profile " +
                                 profile.name + "'s " + short_text(profile.reference_resolution) + " m");
  }
  resolution = node.number("resolution", scenes_pixel.value_or(profile.reference_resolution), 1e-9);
  AlignSettings align;
  const std::vector<std::string> methods{"near", "bilinear", "cubic", "average"};
  align.refine = resampling_from_string(node.choice("refine", methods, "bilinear"));
  align.coarsen = resampling_from_string(node.choice("coarsen", methods, "average"));
  node.finish();
  return align;
}

}  // namespace tinct
