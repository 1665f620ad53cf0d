#include "runs/encoder_artifact.hpp"

#include "runs/model_archive.hpp"
#include "util/error.hpp"

namespace fs = std::filesystem;

namespace tinct {

void save_encoder(const fs::path& file, const torch::nn::Module& encoder, const EncoderArtifact& artifact,
                  const torch::nn::Module* decoder) {
  ArchiveWriter archive(ArchiveKind::encoder);
  archive.module("encoder", encoder);
  if (decoder) archive.module("decoder", *decoder);
  archive.description(artifact.model, artifact.normalisation, artifact.chip_size);
  archive.save(file);
}

EncoderArtifact read_encoder_artifact(const fs::path& file) {
  ArchiveReader archive(file, ArchiveKind::encoder);
  EncoderArtifact artifact;
  artifact.model = archive.model_spec();
  archive.inputs(artifact.normalisation, artifact.chip_size);
  artifact.has_decoder = archive.has("decoder");
  return artifact;
}

void load_encoder_weights(const fs::path& file, torch::nn::Module& encoder) {
  ArchiveReader archive(file, ArchiveKind::encoder);
  archive.module("encoder", encoder);
}

void load_decoder_weights(const fs::path& file, torch::nn::Module& decoder) {
  ArchiveReader archive(file, ArchiveKind::encoder);
  if (!archive.has("decoder")) {
    fail_usage(file.string() + " holds no colour decoder (written before decoders were kept); head pools hypercolumn "
               "and colour need it: run tinct pretrain again, or use pool global or centre");
  }
  archive.module("decoder", decoder);
}

}  // namespace tinct
