// The fine-tuned classifier: a feature extractor (the pretrained or scratch encoder, and for
// the hypercolumn and colour readouts the colour decoder too), a readout of its features
// (head.pool) and a head (head.kind): see models/head_spec.hpp.
#pragma once

#include <torch/torch.h>

#include <string>
#include <vector>

#include "models/classifier_head.hpp"
#include "models/colour_decoder.hpp"
#include "models/encoder.hpp"
#include "models/head_spec.hpp"
#include "models/model_spec.hpp"
#include "models/probe_heads.hpp"

namespace tinct {

struct ClassifierSpec {
  ModelSpec model;  // the encoder part, and the decoder part for pools that read the decoder
  int classes = 2;
  double dropout = 0.2;
  int hidden = 0;
  HeadSpec head;
};

// The number of features the readout gives for `spec` (no forward needed).
std::int64_t readout_features(const ClassifierSpec& spec);

class ClassifierModelImpl : public torch::nn::Module {
 public:
  explicit ClassifierModelImpl(const ClassifierSpec& spec);
  // (B, bands, H, W) -> (B, classes) logits
  torch::Tensor forward(torch::Tensor x);
  // (B, bands, H, W) -> (B, readout_features(spec)): what the head sees.
  torch::Tensor features(torch::Tensor x);
  // (B, readout_features(spec)) -> (B, classes) logits: the head alone.
  torch::Tensor classify(torch::Tensor features);
  const ClassifierSpec& spec() const { return spec_; }

  // The encoder and, when the readout uses it, the decoder: frozen or trained together.
  std::vector<torch::Tensor> extractor_parameters();
  std::vector<torch::Tensor> head_parameters();
  void extractor_eval();

  Encoder encoder{nullptr};
  ColourDecoder decoder{nullptr};        // null unless pool_uses_decoder(spec.head.pool)
  ClassifierHead head{nullptr};          // kind trained
  LinearProbeHead linear_probe{nullptr};  // kind linear_probe
  KnnHead knn{nullptr};                  // kind knn

 private:
  ClassifierSpec spec_;
};
TORCH_MODULE(ClassifierModel);

}  // namespace tinct
