#include "runs/encoder_export.hpp"

#include <torch/torch.h>

#include <map>
#include <string>
#include <utility>
#include <vector>

#include "models/encoder.hpp"
#include "models/model_spec.hpp"
#include "runs/encoder_artifact.hpp"
#include "runs/metrics_log.hpp"
#include "runs/safetensors.hpp"
#include "util/error.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

std::string joined(const std::vector<std::string>& items) {
  std::string text;
  for (const auto& item : items) text += (text.empty() ? "" : ",") + item;
  return text;
}

std::string joined(const std::vector<double>& values) {
  std::vector<std::string> items;
  for (double v : values) items.push_back(metric_text(v));
  return joined(items);
}

}  // namespace

int export_encoder(const fs::path& run, const fs::path& out) {
  const fs::path file = fs::is_directory(run) ? run / "encoder.pt" : run;
  if (!fs::exists(file)) {
    fail_usage(file.string() + " not found; give a finished pretrain run folder (it holds encoder.pt)");
  }
  const EncoderArtifact artifact = read_encoder_artifact(file);
  const auto encoder = make_encoder(artifact.model.encoder);
  load_encoder_weights(file, *encoder);
  std::vector<std::pair<std::string, torch::Tensor>> tensors;
  for (const auto& item : encoder->named_parameters()) tensors.emplace_back(item.key(), item.value().detach());
  for (const auto& item : encoder->named_buffers()) tensors.emplace_back(item.key(), item.value().detach());
  std::map<std::string, std::string> metadata{
      {"format", "tinct-encoder"},
      {"bands", joined(artifact.normalisation.bands)},
      {"band_mean", joined(artifact.normalisation.mean)},
      {"band_std", joined(artifact.normalisation.std)},
      {"chip_size", std::to_string(artifact.chip_size)},
      {"model_spec", model_spec_yaml(artifact.model)},
      {"normalisation", "(reflectance - band_mean) / band_std per band; invalid pixels 0"}};
  metadata[kDataChecksumKey] = safetensors_data_sha256(tensors);
  write_safetensors(out, tensors, metadata);
  return static_cast<int>(tensors.size());
}

}  // namespace tinct
