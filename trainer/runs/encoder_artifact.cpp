#include "runs/encoder_artifact.hpp"

#include <torch/torch.h>

#include "util/atomic_file.hpp"
#include "util/text_lines.hpp"
#include "util/error.hpp"

namespace fs = std::filesystem;

namespace tinct {
namespace {

constexpr std::int64_t kArtifactVersion = 1;

torch::serialize::InputArchive open_artifact(const fs::path& file) {
  torch::serialize::InputArchive archive;
  try {
    archive.load_from(file.string());
  } catch (const c10::Error& e) {
    fail_runtime(file.string() + ": not a readable encoder.pt (" + e.what_without_backtrace() +
                 "); give the encoder.pt of a finished pretrain run");
  }
  c10::IValue version;
  archive.read("format_version", version);
  if (version.toInt() > kArtifactVersion) {
    fail_runtime(file.string() + ": written by a newer tinct (format " + std::to_string(version.toInt()) +
                 "); upgrade tinct to read it");
  }
  return archive;
}

}  // namespace

void save_encoder(const fs::path& file, const torch::nn::Module& encoder, const EncoderArtifact& artifact) {
  torch::serialize::OutputArchive archive, weights;
  encoder.save(weights);
  archive.write("format_version", c10::IValue(kArtifactVersion));
  archive.write("encoder", weights);
  archive.write("model_spec", c10::IValue(artifact.model_spec_yaml));
  archive.write("bands", c10::IValue(join_lines(artifact.normalisation.bands)));
  archive.write("band_mean", torch::tensor(artifact.normalisation.mean, torch::kFloat64));
  archive.write("band_std", torch::tensor(artifact.normalisation.std, torch::kFloat64));
  archive.write("chip_size", c10::IValue(static_cast<std::int64_t>(artifact.chip_size)));
  const fs::path temporary = temporary_sibling(file);
  archive.save_to(temporary.string());
  commit_file(temporary, file);
}

EncoderArtifact read_encoder_artifact(const fs::path& file) {
  torch::serialize::InputArchive archive = open_artifact(file);
  EncoderArtifact artifact;
  c10::IValue value;
  archive.read("model_spec", value);
  artifact.model_spec_yaml = value.toStringRef();
  archive.read("bands", value);
  artifact.normalisation.bands = split_lines(value.toStringRef());
  torch::Tensor mean, std;
  archive.read("band_mean", mean);
  archive.read("band_std", std);
  for (std::int64_t i = 0; i < mean.numel(); ++i) {
    artifact.normalisation.mean.push_back(mean[i].item<double>());
    artifact.normalisation.std.push_back(std[i].item<double>());
  }
  archive.read("chip_size", value);
  artifact.chip_size = static_cast<int>(value.toInt());
  return artifact;
}

void load_encoder_weights(const fs::path& file, torch::nn::Module& encoder) {
  torch::serialize::InputArchive archive = open_artifact(file), weights;
  archive.read("encoder", weights);
  encoder.load(weights);
}

}  // namespace tinct
