#include "runs/encoder_artifact.hpp"

#include "runs/model_archive.hpp"

namespace fs = std::filesystem;

namespace tinct {

void save_encoder(const fs::path& file, const torch::nn::Module& encoder, const EncoderArtifact& artifact) {
  ArchiveWriter archive(ArchiveKind::encoder);
  archive.module("encoder", encoder);
  archive.description(artifact.model, artifact.normalisation, artifact.chip_size);
  archive.save(file);
}

EncoderArtifact read_encoder_artifact(const fs::path& file) {
  ArchiveReader archive(file, ArchiveKind::encoder);
  EncoderArtifact artifact;
  artifact.model = archive.model_spec();
  archive.inputs(artifact.normalisation, artifact.chip_size);
  return artifact;
}

void load_encoder_weights(const fs::path& file, torch::nn::Module& encoder) {
  ArchiveReader archive(file, ArchiveKind::encoder);
  archive.module("encoder", encoder);
}

}  // namespace tinct
