// The architecture of a colourisation model as plain data: which encoder, how wide, which
// decoder output. Saved as YAML beside every checkpoint so a model can be rebuilt exactly.
// No LibTorch here: configs and checks read it without the trainer.
#pragma once

#include <string>
#include <vector>

namespace tinct {

class ConfigNode;

struct EncoderSpec {
  std::string name = "compact";  // one of encoder_names()
  int bands = 0;                 // input channels: the bands of the store, in order
  double width = 1.0;            // multiplies every stage's channel count
};

struct DecoderSpec {
  bool skips = true;             // concatenate the encoder stage at each stride
  int channels = 0;              // first upsampling step's channels; 0 = half the deepest stage
  std::string output = "lab";    // one of decoder_output_names()
  int ab_bins_per_axis = 0;      // output ab_bins only: the ab grid is per_axis x per_axis
};

struct ModelSpec {
  EncoderSpec encoder;
  DecoderSpec decoder;
};

const std::vector<std::string>& encoder_names();         // compact, resnet18, resnet34
const std::vector<std::string>& decoder_output_names();  // lab, ab_bins

// `base` channels times `width`; width 1 keeps `base`, any other width rounds to a
// multiple of 8 (at least 8).
int scaled_channels(int base, double width);

// 3 for lab (L/100, a/128, b/128); 1 + per_axis^2 for ab_bins (L/100, then ab bin logits).
int decoder_output_channels(const DecoderSpec& spec);

// Chip sizes must be a multiple of this: the encoder's deepest stride.
int chip_size_multiple(const EncoderSpec& spec);

// Fails (usage error) on an unknown name, bands < 1, width <= 0 or a bad bin count.
void check_model_spec(const ModelSpec& spec);

// YAML text with every field; model_spec_from_yaml(model_spec_yaml(s)) == s exactly.
std::string model_spec_yaml(const ModelSpec& spec);
// Errors name `source` and the key, e.g. "encoder.pt: encoder.name: expected one of ...".
ModelSpec model_spec_from_yaml(const std::string& text, const std::string& source = "model spec");

// The `model:` section of a config (the caller passes root.section("model")):
//   encoder: compact | resnet18 | resnet34   width: 1.0   skips: true
//   decoder_channels: 0   output: lab | ab_bins   ab_bins_per_axis: 22 (ab_bins only)
// `bands` comes from the store. Calls node.finish().
ModelSpec read_model_spec(const ConfigNode& node, int bands);

bool operator==(const EncoderSpec& a, const EncoderSpec& b);
bool operator==(const DecoderSpec& a, const DecoderSpec& b);
bool operator==(const ModelSpec& a, const ModelSpec& b);

}  // namespace tinct
