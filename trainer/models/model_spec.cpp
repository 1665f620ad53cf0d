#include "models/model_spec.hpp"

#include <yaml-cpp/yaml.h>

#include <cmath>
#include <cstdio>
#include <cstdlib>

#include "util/config_node.hpp"
#include "util/error.hpp"

namespace tinct {
namespace {

constexpr double kMinWidth = 0.125;
constexpr double kMaxWidth = 4.0;
constexpr int kMaxBands = 1024;
constexpr int kMaxDecoderChannels = 4096;
constexpr int kMinAbBinsPerAxis = 2;
constexpr int kMaxAbBinsPerAxis = 64;
constexpr int kDefaultAbBinsPerAxis = 22;  // 10-unit bins over [-110, 110] (Zhang et al. 2016)

std::string joined(const std::vector<std::string>& names) {
  std::string list;
  for (const auto& name : names) list += (list.empty() ? "" : ", ") + name;
  return list;
}

bool contains(const std::vector<std::string>& names, const std::string& name) {
  for (const auto& candidate : names) {
    if (candidate == name) return true;
  }
  return false;
}

// The shortest decimal text that reads back as exactly `value`.
std::string exact_text(double value) {
  char buffer[40];
  for (int digits = 1; digits <= 17; ++digits) {
    std::snprintf(buffer, sizeof buffer, "%.*g", digits, value);
    if (std::strtod(buffer, nullptr) == value) break;
  }
  return buffer;
}

EncoderSpec read_encoder_section(const ConfigNode& node) {
  EncoderSpec spec;
  spec.name = node.choice("name", encoder_names());
  spec.bands = static_cast<int>(node.integer("bands", std::nullopt, 1, kMaxBands));
  spec.width = node.number("width", std::nullopt, kMinWidth, kMaxWidth);
  node.finish();
  return spec;
}

DecoderSpec read_decoder_section(const ConfigNode& node) {
  DecoderSpec spec;
  spec.skips = node.flag("skips");
  spec.channels = static_cast<int>(node.integer("channels", std::nullopt, 0, kMaxDecoderChannels));
  spec.output = node.choice("output", decoder_output_names());
  spec.ab_bins_per_axis = static_cast<int>(node.integer("ab_bins_per_axis", std::nullopt, 0,
                                                        kMaxAbBinsPerAxis));
  if (spec.output == "ab_bins" && spec.ab_bins_per_axis < kMinAbBinsPerAxis) {
    node.fail("ab_bins_per_axis", "output ab_bins needs at least " +
                                      std::to_string(kMinAbBinsPerAxis) + " bins per axis");
  }
  if (spec.output == "lab" && spec.ab_bins_per_axis != 0) {
    node.fail("ab_bins_per_axis", "must be 0 with output lab");
  }
  node.finish();
  return spec;
}

}  // namespace

const std::vector<std::string>& encoder_names() {
  static const std::vector<std::string> names = {"compact", "resnet18", "resnet34"};
  return names;
}

const std::vector<std::string>& decoder_output_names() {
  static const std::vector<std::string> names = {"lab", "ab_bins"};
  return names;
}

int scaled_channels(int base, double width) {
  if (width == 1.0) return base;
  const long rounded = std::lround(base * width / 8.0) * 8;
  return rounded < 8 ? 8 : static_cast<int>(rounded);
}

int decoder_output_channels(const DecoderSpec& spec) {
  if (spec.output == "ab_bins") return 1 + spec.ab_bins_per_axis * spec.ab_bins_per_axis;
  return 3;
}

int chip_size_multiple(const EncoderSpec& spec) { return spec.name == "compact" ? 16 : 32; }

void check_model_spec(const ModelSpec& spec) {
  const EncoderSpec& encoder = spec.encoder;
  const DecoderSpec& decoder = spec.decoder;
  if (!contains(encoder_names(), encoder.name)) {
    fail_usage("model: unknown encoder \"" + encoder.name + "\"; valid encoders: " +
               joined(encoder_names()));
  }
  if (encoder.bands < 1 || encoder.bands > kMaxBands) {
    fail_usage("model: encoder needs 1 to " + std::to_string(kMaxBands) + " bands, got " +
               std::to_string(encoder.bands));
  }
  if (!(encoder.width >= kMinWidth && encoder.width <= kMaxWidth)) {
    fail_usage("model: width must be from " + exact_text(kMinWidth) + " to " +
               exact_text(kMaxWidth) + ", got " + exact_text(encoder.width));
  }
  if (!contains(decoder_output_names(), decoder.output)) {
    fail_usage("model: unknown decoder output \"" + decoder.output + "\"; valid outputs: " +
               joined(decoder_output_names()));
  }
  if (decoder.channels < 0 || decoder.channels > kMaxDecoderChannels) {
    fail_usage("model: decoder channels must be from 0 to " +
               std::to_string(kMaxDecoderChannels) + ", got " + std::to_string(decoder.channels));
  }
  if (decoder.output == "ab_bins" && (decoder.ab_bins_per_axis < kMinAbBinsPerAxis ||
                                      decoder.ab_bins_per_axis > kMaxAbBinsPerAxis)) {
    fail_usage("model: ab_bins_per_axis must be from " + std::to_string(kMinAbBinsPerAxis) +
               " to " + std::to_string(kMaxAbBinsPerAxis) + " with output ab_bins, got " +
               std::to_string(decoder.ab_bins_per_axis));
  }
  if (decoder.output == "lab" && decoder.ab_bins_per_axis != 0) {
    fail_usage("model: ab_bins_per_axis must be 0 with output lab");
  }
}

std::string model_spec_yaml(const ModelSpec& spec) {
  YAML::Emitter out;
  out << YAML::BeginMap;
  out << YAML::Key << "encoder" << YAML::Value << YAML::BeginMap;
  out << YAML::Key << "name" << YAML::Value << spec.encoder.name;
  out << YAML::Key << "bands" << YAML::Value << spec.encoder.bands;
  out << YAML::Key << "width" << YAML::Value << exact_text(spec.encoder.width);
  out << YAML::EndMap;
  out << YAML::Key << "decoder" << YAML::Value << YAML::BeginMap;
  out << YAML::Key << "skips" << YAML::Value << spec.decoder.skips;
  out << YAML::Key << "channels" << YAML::Value << spec.decoder.channels;
  out << YAML::Key << "output" << YAML::Value << spec.decoder.output;
  out << YAML::Key << "ab_bins_per_axis" << YAML::Value << spec.decoder.ab_bins_per_axis;
  out << YAML::EndMap;
  out << YAML::EndMap;
  return std::string(out.c_str()) + "\n";
}

ModelSpec model_spec_from_yaml(const std::string& text, const std::string& source) {
  const ConfigNode root = ConfigNode::from_text(text, source, ".");
  ModelSpec spec;
  spec.encoder = read_encoder_section(root.section("encoder"));
  spec.decoder = read_decoder_section(root.section("decoder"));
  root.finish();
  return spec;
}

ModelSpec read_model_spec(const ConfigNode& node, int bands) {
  if (bands < 1 || bands > kMaxBands) {
    fail_usage(node.where("") + ": the model needs 1 to " + std::to_string(kMaxBands) +
               " input bands, got " + std::to_string(bands));
  }
  ModelSpec spec;
  spec.encoder.name = node.choice("encoder", encoder_names(), EncoderSpec{}.name);
  spec.encoder.bands = bands;
  spec.encoder.width = node.number("width", 1.0, kMinWidth, kMaxWidth);
  spec.decoder.skips = node.flag("skips", true);
  spec.decoder.channels =
      static_cast<int>(node.integer("decoder_channels", 0, 0, kMaxDecoderChannels));
  spec.decoder.output = node.choice("output", decoder_output_names(), DecoderSpec{}.output);
  if (spec.decoder.output == "ab_bins") {
    spec.decoder.ab_bins_per_axis = static_cast<int>(node.integer(
        "ab_bins_per_axis", kDefaultAbBinsPerAxis, kMinAbBinsPerAxis, kMaxAbBinsPerAxis));
  } else if (node.has("ab_bins_per_axis")) {
    node.fail("ab_bins_per_axis", "applies only with output: ab_bins (output is " +
                                      spec.decoder.output + ")");
  }
  node.finish();
  return spec;
}

bool operator==(const EncoderSpec& a, const EncoderSpec& b) {
  return a.name == b.name && a.bands == b.bands && a.width == b.width;
}

bool operator==(const DecoderSpec& a, const DecoderSpec& b) {
  return a.skips == b.skips && a.channels == b.channels && a.output == b.output &&
         a.ab_bins_per_axis == b.ab_bins_per_axis;
}

bool operator==(const ModelSpec& a, const ModelSpec& b) {
  return a.encoder == b.encoder && a.decoder == b.decoder;
}

}  // namespace tinct
