#include "models/probe_heads.hpp"

#include <algorithm>

#include "util/error.hpp"

namespace tinct {

std::pair<torch::Tensor, torch::Tensor> column_standardisation(const torch::Tensor& rows) {
  const torch::Tensor mean = rows.mean(0);
  torch::Tensor sd = rows.std(0, /*unbiased=*/false);
  sd = torch::where(sd > 0, sd, torch::ones_like(sd));
  return {mean, sd};
}

LinearProbeHeadImpl::LinearProbeHeadImpl(std::int64_t features, std::int64_t classes)
    : fc(torch::nn::Linear(features, classes)) {
  register_module("fc", fc);
  mean_ = register_buffer("mean", torch::zeros({features}));
  sd_ = register_buffer("sd", torch::ones({features}));
}

void LinearProbeHeadImpl::set_standardisation(const torch::Tensor& mean, const torch::Tensor& sd) {
  torch::NoGradGuard no_grad;
  mean_.copy_(mean);
  sd_.copy_(sd);
}

torch::Tensor LinearProbeHeadImpl::standardised(const torch::Tensor& x) const { return (x - mean_) / sd_; }

torch::Tensor LinearProbeHeadImpl::forward(const torch::Tensor& x) {
  // (B, F) -> (B, classes)
  return fc(standardised(x));
}

KnnHeadImpl::KnnHeadImpl(std::int64_t features, std::int64_t classes, std::int64_t k) : classes_(classes), k_(k) {
  if (k < 1) fail_usage("model: knn needs k >= 1");
  // Float64 throughout, so distances do not depend on float32 rounding of near ties.
  mean_ = register_buffer("mean", torch::zeros({features}, torch::kFloat64));
  sd_ = register_buffer("sd", torch::ones({features}, torch::kFloat64));
  // Empty until fitted; loading model.pt resizes them to the saved bank.
  bank_ = register_buffer("bank", torch::zeros({0, features}, torch::kFloat64));
  labels_ = register_buffer("labels", torch::zeros({0}, torch::kInt64));
}

void KnnHeadImpl::set_bank(const torch::Tensor& rows, const torch::Tensor& labels) {
  torch::NoGradGuard no_grad;
  const torch::Tensor x = rows.to(torch::kFloat64);
  const auto [mean, sd] = column_standardisation(x);
  mean_.copy_(mean);
  sd_.copy_(sd);
  bank_.set_(((x - mean) / sd).contiguous());
  labels_.set_(labels.to(torch::kInt64).clone());
}

torch::Tensor KnnHeadImpl::forward(const torch::Tensor& x) {
  const std::int64_t rows = bank_.size(0);
  if (rows == 0) fail_runtime("model: the knn head holds no training rows (not fitted)");
  const std::int64_t k = std::min(k_, rows);
  // (B, F) -> (B, N) distances; no matrix-product shortcut, so equal rows give equal distances
  const torch::Tensor distance =
      torch::cdist(((x.to(torch::kFloat64) - mean_) / sd_).unsqueeze(0), bank_.unsqueeze(0),
                   2.0, /*compute_mode=donot_use_mm_for_euclid_dist*/ 2)
          .squeeze(0);
  // stable sort: equal distances keep the lower row first
  const torch::Tensor order =
      std::get<1>(torch::sort(distance, c10::optional<bool>(true), /*dim=*/1, /*descending=*/false)).narrow(1, 0, k);
  const torch::Tensor neighbour_labels = labels_.index_select(0, order.flatten()).view({-1, k});
  const torch::Tensor votes =
      torch::zeros({x.size(0), classes_}, torch::kFloat64).scatter_add_(1, neighbour_labels,
                                                                        torch::ones_like(neighbour_labels, torch::kFloat64));
  // -> (B, classes)
  return torch::log((votes / static_cast<double>(k)).clamp_min(1e-9)).to(x.scalar_type());
}

}  // namespace tinct
