#include "models/classifier_model.hpp"

namespace tinct {

ClassifierModelImpl::ClassifierModelImpl(const ClassifierSpec& spec) : spec_(spec) {
  encoder = register_module("encoder", Encoder(make_encoder(spec_.model.encoder)));
  head = register_module("head", ClassifierHead(encoder->feature_channels(), spec_.classes, spec_.dropout,
                                                spec_.hidden));
}

torch::Tensor ClassifierModelImpl::forward(torch::Tensor x) {
  x = encoder->forward(x);  // (B, bands, H, W) -> (B, C, h, w)
  return head->forward(x);  // -> (B, classes)
}

}  // namespace tinct
