#include "models/classifier_head.hpp"

#include <torch/torch.h>

#include "util/error.hpp"

namespace tinct {

ClassifierHeadImpl::ClassifierHeadImpl(std::int64_t in_features, std::int64_t classes,
                                       double dropout_probability, std::int64_t hidden_features)
    : pool(torch::nn::AdaptiveAvgPool2dOptions({1, 1})),
      dropout(torch::nn::DropoutOptions(dropout_probability)) {
  if (in_features < 1 || classes < 1 || hidden_features < 0) {
    fail_usage("model: the head needs in_features >= 1, classes >= 1 and hidden >= 0");
  }
  if (!(dropout_probability >= 0.0 && dropout_probability < 1.0)) {
    fail_usage("model: head dropout must be from 0 to below 1, got " +
               std::to_string(dropout_probability));
  }
  register_module("pool", pool);
  register_module("dropout", dropout);
  std::int64_t fc_in = in_features;
  if (hidden_features > 0) {
    hidden = register_module("hidden", torch::nn::Linear(in_features, hidden_features));
    fc_in = hidden_features;
  }
  fc = register_module("fc", torch::nn::Linear(fc_in, classes));
}

torch::Tensor ClassifierHeadImpl::forward(torch::Tensor x) {
  // (B, C, h, w) -> (B, C); features already read out (B, F) pass as they are
  if (x.dim() == 4) x = pool(x).flatten(/*start_dim=*/1);
  x = dropout(x);
  if (hidden) {
    // -> (B, hidden)
    x = torch::relu(hidden(x));
    x = dropout(x);
  }
  // -> (B, classes)
  x = fc(x);
  return x;
}

}  // namespace tinct
