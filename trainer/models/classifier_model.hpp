// The fine-tuned classifier: the pretrained (or scratch) encoder followed by the
// classification head; the colour decoder is not part of it.
#pragma once

#include <torch/torch.h>

#include <string>
#include <vector>

#include "models/classifier_head.hpp"
#include "models/encoder.hpp"
#include "models/model_spec.hpp"

namespace tinct {

struct ClassifierSpec {
  ModelSpec model;  // the encoder part is used
  int classes = 2;
  double dropout = 0.2;
  int hidden = 0;
};

class ClassifierModelImpl : public torch::nn::Module {
 public:
  explicit ClassifierModelImpl(const ClassifierSpec& spec);
  // (B, bands, H, W) -> (B, classes) logits
  torch::Tensor forward(torch::Tensor x);
  const ClassifierSpec& spec() const { return spec_; }

  Encoder encoder{nullptr};
  ClassifierHead head{nullptr};

 private:
  ClassifierSpec spec_;
};
TORCH_MODULE(ClassifierModel);

}  // namespace tinct
