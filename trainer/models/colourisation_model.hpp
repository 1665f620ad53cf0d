// The pretraining model: an encoder by name and the colour decoder over its stages, built
// from a ModelSpec (saved with each checkpoint). Fine-tuning keeps `encoder` and drops
// `decoder`; parameter names start with "encoder." and "decoder.".
#pragma once

#include "models/colour_decoder.hpp"
#include "models/encoder.hpp"
#include "models/model_spec.hpp"

namespace tinct {

class ColourisationModelImpl : public torch::nn::Module {
 public:
  // Checks the spec first (check_model_spec).
  explicit ColourisationModelImpl(const ModelSpec& spec);

  // (B, bands, H, W) -> (B, 3 or 1 + Q, H, W); H and W multiples of chip_size_multiple().
  torch::Tensor forward(torch::Tensor x);

  const ModelSpec& spec() const { return spec_; }

  Encoder encoder{nullptr};
  ColourDecoder decoder{nullptr};

 private:
  ModelSpec spec_;
};
TORCH_MODULE(ColourisationModel);

}  // namespace tinct
