#include "models/colourisation_model.hpp"

#include <torch/torch.h>

#include "util/error.hpp"

namespace tinct {
namespace {

const ModelSpec& checked(const ModelSpec& spec) {
  check_model_spec(spec);
  return spec;
}

}  // namespace

ColourisationModelImpl::ColourisationModelImpl(const ModelSpec& spec) : spec_(checked(spec)) {
  encoder = register_module("encoder", Encoder(make_encoder(spec_.encoder)));
  decoder = register_module("decoder", ColourDecoder(encoder->stage_channels(),
                                                     encoder->stage_strides(), spec_.decoder));
}

torch::Tensor ColourisationModelImpl::forward(torch::Tensor x) {
  const std::int64_t multiple = chip_size_multiple(spec_.encoder);
  if (x.dim() != 4 || x.size(1) != spec_.encoder.bands || x.size(2) % multiple != 0 ||
      x.size(3) % multiple != 0) {
    fail_usage("model: expected chips (B, " + std::to_string(spec_.encoder.bands) +
               ", H, W) with H and W multiples of " + std::to_string(multiple) + " (encoder " +
               spec_.encoder.name + "), got " + c10::str(x.sizes()));
  }
  // (B, bands, H, W) -> stages, deepest (B, C, H/S, W/S)
  const std::vector<torch::Tensor> stages = encoder->forward_stages(x);
  // -> (B, 3 or 1 + Q, H, W)
  x = decoder(stages);
  return x;
}

}  // namespace tinct
