#include "models/encoder.hpp"

#include <torch/torch.h>

#include <functional>
#include <string>

#include "models/compact_encoder.hpp"
#include "models/resnet_encoder.hpp"
#include "util/error.hpp"

namespace tinct {
namespace {

struct EncoderEntry {
  const char* name;
  std::function<std::shared_ptr<EncoderImpl>(const EncoderSpec&)> make;
};

const std::vector<EncoderEntry>& encoder_table() {
  static const std::vector<EncoderEntry> table = {
      {"compact",
       [](const EncoderSpec& s) { return std::make_shared<CompactEncoderImpl>(s.bands, s.width); }},
      {"resnet18",
       [](const EncoderSpec& s) {
         return std::make_shared<ResNetEncoderImpl>(/*depth=*/18, s.bands, s.width);
       }},
      {"resnet34",
       [](const EncoderSpec& s) {
         return std::make_shared<ResNetEncoderImpl>(/*depth=*/34, s.bands, s.width);
       }},
  };
  return table;
}

}  // namespace

std::shared_ptr<EncoderImpl> make_encoder(const EncoderSpec& spec) {
  if (spec.bands < 1) {
    fail_usage("model: the encoder needs at least 1 band, got " + std::to_string(spec.bands));
  }
  if (!(spec.width > 0)) fail_usage("model: width must be > 0");
  std::string valid;
  for (const auto& entry : encoder_table()) {
    if (spec.name == entry.name) return entry.make(spec);
    valid += (valid.empty() ? "" : ", ") + std::string(entry.name);
  }
  fail_usage("model: unknown encoder \"" + spec.name + "\"; valid encoders: " + valid);
}

void init_conv_bn(torch::nn::Module& module) {
  // apply(), not modules(): it also works in a constructor, before a shared_ptr holds `module`.
  module.apply([](torch::nn::Module& child) {
    if (auto* conv = child.as<torch::nn::Conv2d>()) {
      torch::nn::init::kaiming_normal_(conv->weight, /*a=*/0.0, torch::kFanOut, torch::kReLU);
    } else if (auto* bn = child.as<SyncableBatchNorm2d>()) {
      torch::nn::init::ones_(bn->weight);
      torch::nn::init::zeros_(bn->bias);
    }
  });
}

}  // namespace tinct
