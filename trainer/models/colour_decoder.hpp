// The colour decoder: from the deepest encoder stage back up to chip resolution, one
// step per factor of 2 (bilinear x2, optional concatenation of the encoder stage at that
// stride, 3x3 conv + BN + ReLU), then a 1x1 conv to the outputs (see decoder_output_channels).
// Outputs are raw: scaled Lab (L/100, a/128, b/128), or L/100 then ab bin logits.
#pragma once

#include <torch/nn/modules/conv.h>

#include <cstdint>
#include <vector>

#include "models/batch_norm.hpp"
#include "models/model_spec.hpp"

namespace tinct {

// (B, Cin, h, w) [+ skip (B, Cskip, 2h, 2w)] -> (B, C, 2h, 2w)
class DecoderStepImpl : public torch::nn::Module {
 public:
  DecoderStepImpl(std::int64_t in_channels, std::int64_t skip_channels, std::int64_t channels);
  // `skip` undefined when the step has no skip.
  torch::Tensor forward(torch::Tensor x, const torch::Tensor& skip = {});

 private:
  torch::nn::Conv2d conv{nullptr};
  SyncableBatchNorm2d bn{nullptr};
};
TORCH_MODULE(DecoderStep);

class ColourDecoderImpl : public torch::nn::Module {
 public:
  // The encoder's stage_channels() and stage_strides() (powers of 2, shallow to deep).
  // Step channels start at spec.channels (0: half the deepest stage) and halve each step,
  // not below 8. Steps are registered as up<stride>: up16, up8, ..., up1; then "head".
  ColourDecoderImpl(const std::vector<std::int64_t>& stage_channels,
                    const std::vector<std::int64_t>& stage_strides, const DecoderSpec& spec);

  // The encoder's stages -> (B, output_channels(), H, W), H = deepest stage height x stride.
  torch::Tensor forward(const std::vector<torch::Tensor>& stages);
  // Every step's output (up<deepest/2> first, up1 last, at chip resolution), then the
  // output of forward() last. For readouts that keep the decoder as a feature extractor.
  std::vector<torch::Tensor> forward_steps(const std::vector<torch::Tensor>& stages);
  std::int64_t output_channels() const { return output_channels_; }
  // Channels of each step's output, in forward_steps() order (without the output).
  const std::vector<std::int64_t>& step_channels() const { return step_channels_; }

 private:
  std::vector<DecoderStep> steps_;
  std::vector<int> skip_stage_;  // per step: the stage concatenated, or -1
  std::vector<std::int64_t> step_channels_;
  torch::nn::Conv2d head{nullptr};
  std::int64_t output_channels_ = 0;
};
TORCH_MODULE(ColourDecoder);

}  // namespace tinct
