#include "mapping/window_model.hpp"

#include <torch/torch.h>

#include <cstring>

#include "models/classifier_model.hpp"
#include "runs/classifier_artifact.hpp"
#include "util/error.hpp"

namespace tinct {

struct WindowModel::Impl {
  ClassifierArtifact artifact;
  ClassifierModel model{nullptr};
  int features = 0;
  int feature_stride = 16;

  // read-out features (N, F) -> logits into `logits`, features into `features`.
  void finish(const torch::Tensor& read_out, float* logits, float* out_features) {
    const torch::Tensor z = model->classify(read_out).contiguous();
    std::memcpy(logits, z.data_ptr<float>(), sizeof(float) * z.numel());
    const torch::Tensor f = read_out.contiguous();
    std::memcpy(out_features, f.data_ptr<float>(), sizeof(float) * f.numel());
  }
};

WindowModel::WindowModel(const std::filesystem::path& model_file) : impl_(std::make_unique<Impl>()) {
  impl_->model = load_classifier(model_file, impl_->artifact);
  impl_->model->eval();
  impl_->features = static_cast<int>(readout_features(impl_->artifact.spec));
  impl_->feature_stride = static_cast<int>(impl_->model->encoder->stage_strides().back());
}

WindowModel::~WindowModel() = default;

const std::vector<std::string>& WindowModel::classes() const { return impl_->artifact.classes; }
const BandNormalisation& WindowModel::normalisation() const { return impl_->artifact.normalisation; }
int WindowModel::chip_size() const { return impl_->artifact.chip_size; }
int WindowModel::feature_count() const { return impl_->features; }
int WindowModel::feature_stride() const { return impl_->feature_stride; }

void WindowModel::exact(const float* windows, int count, float* logits, float* features) {
  torch::InferenceMode inference;
  const auto bands = static_cast<std::int64_t>(impl_->artifact.normalisation.bands.size());
  const std::int64_t size = impl_->artifact.chip_size;
  const torch::Tensor x = torch::from_blob(const_cast<float*>(windows), {count, bands, size, size}, torch::kFloat32);
  impl_->finish(impl_->model->features(x), logits, features);  // (N, F) as the head reads it
}

void WindowModel::dense(const float* tile, int height, int width, int stride, float* logits, float* features) {
  if (impl_->artifact.spec.head.pool != HeadPool::global) {  // map settings refuse this first
    fail_usage("map: dense mode needs a run whose head pools the whole window (head.pool global)");
  }
  torch::InferenceMode inference;
  const auto bands = static_cast<std::int64_t>(impl_->artifact.normalisation.bands.size());
  const torch::Tensor x = torch::from_blob(const_cast<float*>(tile), {1, bands, height, width}, torch::kFloat32);
  const torch::Tensor map = impl_->model->encoder->forward(x);  // (1, F, height / S, width / S)
  const std::int64_t kernel = impl_->artifact.chip_size / impl_->feature_stride;
  const std::int64_t step = stride / impl_->feature_stride;
  const torch::Tensor pooled = torch::avg_pool2d(map, {kernel, kernel}, {step, step});  // (1, F, rows, cols)
  const torch::Tensor windows = pooled[0].flatten(1).transpose(0, 1);                    // (rows * cols, F)
  impl_->finish(windows, logits, features);
}

}  // namespace tinct
