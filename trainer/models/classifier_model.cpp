#include "models/classifier_model.hpp"

#include <numeric>

#include "models/point_readout.hpp"
#include "util/error.hpp"

namespace tinct {
namespace {

constexpr std::int64_t kLabChannels = 3;

std::int64_t sum(const std::vector<std::int64_t>& values) {
  return std::accumulate(values.begin(), values.end(), std::int64_t{0});
}

void check_readout(const ClassifierSpec& spec, const ColourDecoderImpl* decoder) {
  if (spec.head.pool != HeadPool::colour) return;
  if (spec.model.decoder.output != "lab") {
    fail_usage("head: pool colour reads the decoder's Lab output, but this model's decoder outputs " +
               spec.model.decoder.output + "; use a pretrain run with model.output lab, or pool hypercolumn");
  }
  if (decoder && spec.head.colour_channels > decoder->step_channels().back()) {
    fail_usage("head: colour_channels is " + std::to_string(spec.head.colour_channels) + " but the decoder's last step has " +
               std::to_string(decoder->step_channels().back()) + " channels");
  }
}

std::int64_t colour_readout_features(const ClassifierSpec& spec) {
  return kLabChannels + spec.head.colour_channels + (spec.head.input_bands ? spec.model.encoder.bands : 0);
}

}  // namespace

std::int64_t readout_features(const ClassifierSpec& spec) {
  const auto encoder = make_encoder(spec.model.encoder);
  if (!pool_uses_decoder(spec.head.pool)) return encoder->feature_channels();
  const ColourDecoderImpl decoder(encoder->stage_channels(), encoder->stage_strides(), spec.model.decoder);
  if (spec.head.pool == HeadPool::colour) return colour_readout_features(spec);
  return sum(encoder->stage_channels()) + sum(decoder.step_channels()) + decoder.output_channels();
}

ClassifierModelImpl::ClassifierModelImpl(const ClassifierSpec& spec) : spec_(spec) {
  encoder = register_module("encoder", Encoder(make_encoder(spec_.model.encoder)));
  std::int64_t features = encoder->feature_channels();
  if (pool_uses_decoder(spec_.head.pool)) {
    decoder = register_module("decoder", ColourDecoder(encoder->stage_channels(), encoder->stage_strides(),
                                                       spec_.model.decoder));
    check_readout(spec_, decoder.get());
    features = spec_.head.pool == HeadPool::colour
                   ? colour_readout_features(spec_)
                   : sum(encoder->stage_channels()) + sum(decoder->step_channels()) + decoder->output_channels();
  }
  switch (spec_.head.kind) {
    case HeadKind::trained:
      head = register_module("head", ClassifierHead(features, spec_.classes, spec_.dropout, spec_.hidden));
      break;
    case HeadKind::linear_probe:
      linear_probe = register_module("head", LinearProbeHead(features, spec_.classes));
      break;
    case HeadKind::knn:
      knn = register_module("head", KnnHead(features, spec_.classes, spec_.head.k));
      break;
  }
}

torch::Tensor ClassifierModelImpl::features(torch::Tensor x) {
  const std::int64_t height = x.size(2), width = x.size(3);
  // (B, bands, H, W) -> stages, shallow to deep, the deepest (B, C, H/S, W/S)
  const std::vector<torch::Tensor> stages = encoder->forward_stages(x);
  switch (spec_.head.pool) {
    case HeadPool::global:
      // -> (B, C), the same operation as the trained head's own pooling
      return torch::adaptive_avg_pool2d(stages.back(), {1, 1}).flatten(1);
    case HeadPool::centre:
      return centre_cells(stages.back());  // -> (B, C)
    case HeadPool::hypercolumn: {
      // every encoder stage, decoder step and the decoder output at the label pixel -> (B, F)
      std::vector<torch::Tensor> columns;
      for (const auto& stage : stages) columns.push_back(upsampled_at_label_pixel(stage, height, width));
      for (const auto& step : decoder->forward_steps(stages)) {
        columns.push_back(upsampled_at_label_pixel(step, height, width));
      }
      return torch::cat(columns, 1);
    }
    case HeadPool::colour: {
      // (B, 3) predicted Lab [+ (B, colour_channels) of the last step] [+ (B, bands) input],
      // each the 3 x 3 mean at the label pixel
      const std::vector<torch::Tensor> steps = decoder->forward_steps(stages);
      std::vector<torch::Tensor> columns{mean_3x3_at_label_pixel(steps.back())};
      if (spec_.head.colour_channels > 0) {
        columns.push_back(mean_3x3_at_label_pixel(steps[steps.size() - 2].narrow(1, 0, spec_.head.colour_channels)));
      }
      if (spec_.head.input_bands) columns.push_back(mean_3x3_at_label_pixel(x));
      return torch::cat(columns, 1);
    }
  }
  fail_runtime("model: unknown head pool");
}

torch::Tensor ClassifierModelImpl::forward(torch::Tensor x) {
  if (spec_.head.kind == HeadKind::trained && spec_.head.pool == HeadPool::global) {
    // (B, bands, H, W) -> (B, C, h, w) -> (B, classes): the head pools
    return head->forward(encoder->forward(x));
  }
  return classify(features(x));  // -> (B, F) -> (B, classes)
}

torch::Tensor ClassifierModelImpl::classify(torch::Tensor features) {
  switch (spec_.head.kind) {
    case HeadKind::trained: return head->forward(features);
    case HeadKind::linear_probe: return linear_probe->forward(features);
    case HeadKind::knn: return knn->forward(features);
  }
  fail_runtime("model: unknown head kind");
}

std::vector<torch::Tensor> ClassifierModelImpl::extractor_parameters() {
  std::vector<torch::Tensor> parameters = encoder->parameters();
  if (decoder) {
    for (const auto& p : decoder->parameters()) parameters.push_back(p);
  }
  return parameters;
}

std::vector<torch::Tensor> ClassifierModelImpl::head_parameters() {
  if (head) return head->parameters();
  if (linear_probe) return linear_probe->parameters();
  return knn->parameters();
}

void ClassifierModelImpl::extractor_eval() {
  encoder->eval();
  if (decoder) decoder->eval();
}

}  // namespace tinct
