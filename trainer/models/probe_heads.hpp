// Heads fitted on frozen features rather than trained with the network (head kinds
// linear_probe and knn, models/head_spec.hpp). Both standardise the features with the
// training rows' mean and standard deviation, kept as buffers so model.pt holds all they need.
#pragma once

#include <torch/torch.h>

#include <cstdint>

namespace tinct {

// Multinomial logistic regression: logits = W (x - mean) / sd + b.
class LinearProbeHeadImpl : public torch::nn::Module {
 public:
  LinearProbeHeadImpl(std::int64_t features, std::int64_t classes);
  // (B, features) -> (B, classes) logits
  torch::Tensor forward(const torch::Tensor& x);
  // Standardisation of the rows the weights were fitted on.
  void set_standardisation(const torch::Tensor& mean, const torch::Tensor& sd);
  torch::Tensor standardised(const torch::Tensor& x) const;

  torch::nn::Linear fc{nullptr};

 private:
  torch::Tensor mean_, sd_;  // (features)
};
TORCH_MODULE(LinearProbeHead);

// k nearest training rows by Euclidean distance on standardised features (ties in distance
// to the lower row); the vote shares are the probabilities, their logarithm the logits (a
// class without votes gets log 1e-9), so softmax returns the shares and argmax the class with
// the most votes (the lowest index on a tie, like scikit-learn's KNeighborsClassifier).
class KnnHeadImpl : public torch::nn::Module {
 public:
  KnnHeadImpl(std::int64_t features, std::int64_t classes, std::int64_t k);
  // (B, features) -> (B, classes) logits
  torch::Tensor forward(const torch::Tensor& x);
  // rows (N, features) raw; labels (N) int64 class indices. Sets the standardisation too.
  void set_bank(const torch::Tensor& rows, const torch::Tensor& labels);
  std::int64_t k() const { return k_; }

 private:
  std::int64_t classes_, k_;
  torch::Tensor mean_, sd_, bank_, labels_;
};
TORCH_MODULE(KnnHead);

// Column means and standard deviations (population, divisor N) of (N, F) rows; a constant
// column gets sd 1.
std::pair<torch::Tensor, torch::Tensor> column_standardisation(const torch::Tensor& rows);

}  // namespace tinct
